import type { LayoutServerLoad } from './$types';

// Only the fields the pages need reach the browser; never tokens or ids.
export const load: LayoutServerLoad = ({ locals }) => ({
	user: locals.user ? { email: locals.user.email, name: locals.user.name, role: locals.user.role } : null
});
