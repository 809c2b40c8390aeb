/** The four kinds of Emberlot user. Every API route names the roles it admits. */
export const ROLES = ['admin', 'engineer', 'operator', 'manager'] as const;
export type Role = (typeof ROLES)[number];

/** Where each role lands after signing in (Expo Router paths). */
export const ROLE_HOME: Record<Role, string> = {
  admin: '/people',
  engineer: '/plans',
  operator: '/floor',
  manager: '/trends',
};

export const ROLE_LABEL: Record<Role, string> = {
  admin: 'Administrator',
  engineer: 'Reliability engineer',
  operator: 'Floor operator',
  manager: 'Quality manager',
};
