import { ROLES, type Role } from './enums';

export { ROLES, type Role };

/** True when `role` is at least `needed` (admin >= curator >= member). */
export function hasRole(role: Role | null | undefined, needed: Role): boolean {
	if (!role) return false;
	return ROLES.indexOf(role) >= ROLES.indexOf(needed);
}
