/** Roles in ascending order of power; a higher role can do everything a lower one can. */
export const ROLES = ['member', 'curator', 'admin'] as const;
export type Role = (typeof ROLES)[number];

/** True when `role` is at least `needed` (admin >= curator >= member). */
export function hasRole(role: Role | null | undefined, needed: Role): boolean {
	if (!role) return false;
	return ROLES.indexOf(role) >= ROLES.indexOf(needed);
}
