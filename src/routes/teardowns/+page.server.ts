import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { teardownsBy } from '$lib/server/curate/teardowns';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'member');
	return { reports: await teardownsBy(db, user.id) };
};
