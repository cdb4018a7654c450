export const ROLES = ['owner', 'engineer', 'reviewer'] as const

export type Role = typeof ROLES[number]

export const ROLE_LABELS: Record<Role, string> = {
  owner: 'Owner',
  engineer: 'Engineer',
  reviewer: 'Reviewer',
}

/** Higher can do everything lower can. */
export const ROLE_RANK: Record<Role, number> = {
  reviewer: 1,
  engineer: 2,
  owner: 3,
}

/** True when `role` is at least `min` (an Owner can do what an Engineer can, and so on). */
export function roleAtLeast(role: Role | null | undefined, min: Role): boolean {
  return role ? ROLE_RANK[role] >= ROLE_RANK[min] : false
}
