import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { testerOverview } from '$lib/server/consistency';
import { SIGMA_PT_IRE, TESTER_RULES, Z_LIMITS } from '$lib/levels';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	return { overview: await testerOverview(db), sigmaPt: SIGMA_PT_IRE, rules: TESTER_RULES, zLimits: Z_LIMITS };
};
