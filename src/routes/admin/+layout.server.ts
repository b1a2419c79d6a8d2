import { requireRole } from '$lib/server/auth/guard';
import type { LayoutServerLoad } from './$types';

// Pages and actions below check again on their own first line.
export const load: LayoutServerLoad = (event) => {
	requireRole(event, 'admin');
	return {};
};
