import { db } from '$lib/server/db';
import { latestBacktest } from '$lib/server/expected';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => {
	// the newest leave-one-out backtest of expected grades (stored by `npm run report:expected` or the jobs process)
	return { backtest: await latestBacktest(db) };
};
