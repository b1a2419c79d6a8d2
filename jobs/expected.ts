/**
 * Daily: recompute every expected grade and checks (a safety net; grading keeps them current)
 * and store the leave-one-out backtest the learn page shows.
 */
import type { Database } from '../src/lib/server/db/client';
import { refreshAllExpected, runAndStoreBacktest } from '../src/lib/server/expected';

export const DEFAULT_EXPECTED_CRON = '41 3 * * *';

export async function expectedTask(db: Database, now = new Date()) {
	await db.transaction((tx) => refreshAllExpected(tx, now));
	const res = await runAndStoreBacktest(db, now);
	return { predicted: res.predicted, exactRate: res.exactRate, withinOneRate: res.withinOneRate };
}
