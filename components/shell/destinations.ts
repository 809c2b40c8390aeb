import type { Role } from '@/shared/roles';
import type { NavIconName } from '@/components/icons/NavIcon';

export interface Destination {
  path: string;
  label: string;
  icon: NavIconName;
  roles: readonly Role[];
}

/** Every top-level place in the app, in menu order, with the roles that see it. */
export const DESTINATIONS: readonly Destination[] = [
  { path: '/floor', label: 'Floor', icon: 'floor', roles: ['operator', 'engineer', 'admin'] },
  { path: '/alarms', label: 'Alarms', icon: 'alarms', roles: ['operator', 'engineer', 'admin'] },
  { path: '/readings', label: 'Read points', icon: 'readings', roles: ['operator', 'engineer'] },
  { path: '/plans', label: 'Plans', icon: 'plans', roles: ['engineer'] },
  { path: '/devices', label: 'Devices & lots', icon: 'devices', roles: ['engineer', 'manager'] },
  { path: '/schedule', label: 'Schedule', icon: 'schedule', roles: ['engineer', 'operator', 'manager'] },
  { path: '/trends', label: 'Lot trends', icon: 'trends', roles: ['manager', 'engineer'] },
  { path: '/people', label: 'People', icon: 'people', roles: ['admin'] },
  { path: '/mail', label: 'Mail log', icon: 'mail', roles: ['admin'] },
  { path: '/rigs', label: 'Rigs', icon: 'rigs', roles: ['admin', 'engineer'] },
];

/** Pages every signed-in person may open, outside the role menus. */
export const ACCOUNT_PATH = '/account';

/** Bottom tabs on a phone: the role's first four places, then "More" for the rest. */
export const PHONE_TABS = 4;

export function destinationsFor(role: Role): Destination[] {
  return DESTINATIONS.filter((d) => d.roles.includes(role));
}

export function splitForPhone(list: readonly Destination[]): { tabs: Destination[]; overflow: Destination[] } {
  return { tabs: list.slice(0, PHONE_TABS), overflow: list.slice(PHONE_TABS) };
}

const matches = (pathname: string, path: string) => pathname === path || pathname.startsWith(path + '/');

export function destinationAt(pathname: string): Destination | undefined {
  return DESTINATIONS.find((d) => matches(pathname, d.path));
}

/** False only for a known destination that belongs to other roles. */
export function canOpen(role: Role, pathname: string): boolean {
  const d = destinationAt(pathname);
  return !d || d.roles.includes(role);
}

export function isActive(pathname: string, path: string): boolean {
  return matches(pathname, path);
}
