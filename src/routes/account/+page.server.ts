import { requireRole } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	const user = requireRole(event, 'member');
	return { account: { email: user.email, name: user.name, role: user.role } };
};
