import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { memberRunChecks, testerNamesOf, testerOverview } from '$lib/server/consistency';
import { testerKey } from '$lib/levels';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'member');
	// a member sees their own runs and their own tester verdict, nobody else's
	const [runs, names] = await Promise.all([memberRunChecks(db, user.id), testerNamesOf(db, user.id)]);
	const testers = names.length
		? (await testerOverview(db)).testers.filter((x) => names.includes(testerKey(x.tester)))
		: [];
	return {
		account: { email: user.email, name: user.name, role: user.role },
		runs,
		testers: testers.map((x) => ({ tester: x.tester, status: x.status, flagged: x.flagged, verdict: x.verdict }))
	};
};
