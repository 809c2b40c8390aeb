/**
 * Changes one entry of the permission table (shared/domain/permissions.ts) for the length of a
 * test, then puts it back. The API test and the screen test use the same change, so together
 * they show the table driving both sides.
 */
import { PERMISSIONS, type Permission } from '../../shared/domain/permissions';
import type { Role } from '../../shared/roles';

/** The change both tests make: quality managers may book runs (today only engineers may). */
export const BOOKING_OVERRIDE: { action: Permission; roles: readonly Role[] } = { action: 'run.book', roles: ['engineer', 'manager'] };

export async function withPermission<T>(action: Permission, roles: readonly Role[], fn: () => Promise<T>): Promise<T> {
  const table = PERMISSIONS as Record<Permission, readonly Role[]>;
  const before = table[action];
  table[action] = roles;
  try {
    return await fn();
  } finally {
    table[action] = before;
  }
}
