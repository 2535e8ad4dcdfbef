/** The shop's roles and what each may reach. Pure: used by middleware, endpoints, pages and tests. */

export const ROLES = ['buyer', 'photographer', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export function isRole(value: unknown): value is Role {
  return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}

/** Who may use each area. The Studio is the photographer's; an admin may do everything. */
export const AREA_ROLES = {
  account: ['buyer', 'photographer', 'admin'],
  studio: ['photographer', 'admin'],
  dispatch: ['admin'],
} as const satisfies Record<string, readonly Role[]>;
export type Area = keyof typeof AREA_ROLES;

export function canUse(role: Role | null | undefined, area: Area): boolean {
  return role != null && (AREA_ROLES[area] as readonly Role[]).includes(role);
}
