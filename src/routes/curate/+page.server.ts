import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { curatorSummary } from '$lib/server/queries/review';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	return { summary: await curatorSummary(db) };
};
