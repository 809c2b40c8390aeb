import { can, type Permission } from '@/shared/domain/permissions';
import type { Role } from '@/shared/roles';
import type { NavIconName } from '@/components/icons/NavIcon';

export interface Destination {
  path: string;
  label: string;
  /** A shorter word for a phone's bottom tab (a fifth of 390 px), where `label` would be cut. */
  tabLabel?: string;
  icon: NavIconName;
  /** Who sees it: an entry of the permission table (shared/domain/permissions.ts). */
  permission: Permission;
}

/** Every top-level place in the app, in menu order, with the permission that shows it. */
export const DESTINATIONS: readonly Destination[] = [
  { path: '/floor', label: 'Floor', icon: 'floor', permission: 'page.floor' },
  { path: '/alarms', label: 'Alarms', icon: 'alarms', permission: 'page.alarms' },
  { path: '/readings', label: 'Read points', icon: 'readings', permission: 'page.readings' },
  { path: '/plans', label: 'Plans', icon: 'plans', permission: 'page.plans' },
  { path: '/devices', label: 'Devices & lots', tabLabel: 'Lots', icon: 'devices', permission: 'page.devices' },
  { path: '/schedule', label: 'Schedule', icon: 'schedule', permission: 'page.schedule' },
  { path: '/trends', label: 'Lot trends', icon: 'trends', permission: 'page.trends' },
  { path: '/qualifications', label: 'Qualifications', tabLabel: 'Quals', icon: 'qualifications', permission: 'page.qualifications' },
  { path: '/people', label: 'People', icon: 'people', permission: 'page.people' },
  { path: '/mail', label: 'Mail log', icon: 'mail', permission: 'page.mail' },
  { path: '/rigs', label: 'Rigs', icon: 'rigs', permission: 'page.rigs' },
  { path: '/approvals', label: 'Approvals', icon: 'approvals', permission: 'page.approvals' },
  { path: '/audit', label: 'Audit log', icon: 'audit', permission: 'page.audit' },
  { path: '/capacity', label: 'Capacity', icon: 'capacity', permission: 'page.capacity' },
];

/** Pages every signed-in person may open, outside the role menus. */
export const ACCOUNT_PATH = '/account';

/** Bottom tabs on a phone: the role's first four places, then "More" for the rest. */
export const PHONE_TABS = 4;

export function destinationsFor(role: Role): Destination[] {
  return DESTINATIONS.filter((d) => can(role, d.permission));
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
  return !d || can(role, d.permission);
}

export function isActive(pathname: string, path: string): boolean {
  return matches(pathname, path);
}

/** Counts shown on navigation items, by path (the open alarms on /alarms). */
export type NavBadges = Partial<Record<string, number>>;

/** A navigation item's accessible name: "Alarms, 3 open" when it carries a count. */
export function navLabel(label: string, count: number | undefined): string {
  return count ? `${label}, ${count} open` : label;
}

/** The count as the badge shows it (99+ beyond two digits). */
export const badgeText = (count: number) => (count > 99 ? '99+' : String(count));
