// Roles and what each may open. The server enforces access route by route (server/utils/session.ts);
// this table only decides what the navigation shows, so both read from one place.
export const ROLES = ['circulator', 'scrub', 'surgeon', 'coordinator', 'admin'] as const
export type Role = (typeof ROLES)[number]

export const ROLE_LABEL: Record<Role, string> = {
  circulator: 'Circulator',
  scrub: 'Scrub',
  surgeon: 'Surgeon',
  coordinator: 'Coordinator',
  admin: 'Admin',
}

export function isRole(value: unknown): value is Role {
  return typeof value === 'string' && (ROLES as readonly string[]).includes(value)
}

/** True when the person's role is one of the allowed roles. An empty list allows nobody. */
export function hasRole(user: { role?: unknown } | null | undefined, allowed: readonly Role[]): boolean {
  return !!user && isRole(user.role) && allowed.includes(user.role)
}

export interface NavEntry { to: string; label: string; roles: readonly Role[] }

// Our screen names (DESIGN.md). Later screens join this list as they are built.
export const NAV: readonly NavEntry[] = [
  { to: '/', label: 'Today', roles: ROLES },
  { to: '/trace', label: 'Trace', roles: ['coordinator', 'admin', 'surgeon'] },
  { to: '/recalls', label: 'Recalls', roles: ['coordinator', 'admin'] },
  { to: '/shelf', label: 'Shelf', roles: ['circulator', 'coordinator', 'admin'] },
  { to: '/catalog', label: 'Catalog', roles: ['coordinator', 'admin'] },
  { to: '/people', label: 'People', roles: ['admin'] },
  { to: '/settings', label: 'Settings', roles: ['admin'] },
  { to: '/audit', label: 'Audit', roles: ['admin'] },
]

export function navFor(role: Role, available: readonly string[] = NAV.map((n) => n.to)): NavEntry[] {
  return NAV.filter((n) => n.roles.includes(role) && available.includes(n.to))
}
