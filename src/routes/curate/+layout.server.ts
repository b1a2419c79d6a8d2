import { requireRole } from '$lib/server/auth/guard';
import type { LayoutServerLoad } from './$types';

// Every page and action below also checks on its own first line; this only guards the shell.
export const load: LayoutServerLoad = (event) => {
	requireRole(event, 'curator');
	return {};
};
