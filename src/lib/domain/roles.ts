export const roles = ['member', 'trainer', 'manager', 'admin'] as const;
export type Role = (typeof roles)[number];

/** Roles in order of what they may do; each includes the ones before it. */
const rank: Record<Role, number> = { member: 0, trainer: 1, manager: 2, admin: 3 };

export function hasRole(role: Role, atLeast: Role): boolean {
	return rank[role] >= rank[atLeast];
}
