/**
 * The poller task: every 30 seconds, claim due listings and poll them (src/lib/server/polling).
 * Registered by jobs/index.ts. Run `npx tsx jobs/poller.ts` for an extra worker process: workers
 * share listings through leases in PostgreSQL, so any number may run side by side.
 */
import cron, { type ScheduledTask } from 'node-cron';
import { resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createDb, type Database } from '../src/lib/server/db/client';
import { createPoller, type Poller, type PollerOptions } from '../src/lib/server/polling';

/** Every 30 s (node-cron's optional seconds field). */
export const POLLER_SCHEDULE = '*/30 * * * * *';
/** Stop claiming after this long so a run ends before the next tick (noOverlap skips a busy tick anyway). */
const RUN_BUDGET_MS = 25_000;

/**
 * Schedule the poller on `db`. Pass `onStockEvents` (see PollerOptions) to write alert outbox rows in
 * the same transaction as each stock event; the returned poller's `release()` gives back leases.
 */
export function schedulePoller(db: Database, options: PollerOptions = {}): { task: ScheduledTask; poller: Poller } {
	const poller = createPoller(db, { log: (l) => console.log(l), schedule: 'adaptive', ...options });
	const task = cron.schedule(
		POLLER_SCHEDULE,
		async () => {
			try {
				const s = await poller.drain({ budgetMs: RUN_BUDGET_MS });
				if (s.polled) {
					const outcomes = Object.entries(s.byOutcome)
						.map(([k, v]) => `${k} ${v}`)
						.join(', ');
					console.log(
						`poller: ${s.polled} polled in ${s.ms} ms (${outcomes}); ${s.changed} changed, ${s.events} stock events`
					);
				}
			} catch (err) {
				// The database may be away for a moment; the next tick tries again and leases expire meanwhile.
				console.error(`poller: run failed: ${err instanceof Error ? err.message : String(err)}`);
			}
		},
		{ name: 'poller', noOverlap: true }
	);
	return { task, poller };
}

const isMain = process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (isMain) {
	const { db, sql } = createDb(process.env.DATABASE_URL, { max: 4 });
	const { task, poller } = schedulePoller(db);
	console.log(`poller worker ${poller.workerId} running (${POLLER_SCHEDULE})`);
	// one stop however many signals arrive (see jobs/index.ts)
	let stopping: Promise<void> | null = null;
	const stop = () =>
		(stopping ??= (async () => {
			await task.destroy();
			await poller.release().catch(() => 0);
			await sql.end({ timeout: 5 });
			process.exit(0);
		})());
	process.on('SIGINT', stop);
	process.on('SIGTERM', stop);
}
