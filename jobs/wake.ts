/**
 * Waking the alert sender as soon as the poller commits outbox rows, instead of at its next cron
 * tick: the alert hook sends NOTIFY on OUTBOX_CHANNEL inside the poller's transaction (PostgreSQL
 * delivers it on commit), and the jobs process LISTENs on a connection of its own. The cron tick
 * stays as the safety net for retries, quiet hours and a notification lost while reconnecting.
 */
import type postgres from 'postgres';
import { OUTBOX_CHANNEL } from '../src/lib/server/alerts/match';

/**
 * Wrap `task` so it never runs twice at once and no call is lost: a call during a run makes one
 * more run right after it (however many calls came in meanwhile).
 */
export function serialRunner(task: () => Promise<unknown>, onError: (err: unknown) => void = () => {}) {
	let running: Promise<void> | null = null;
	let again = false;
	const run = (): Promise<void> => {
		if (running) {
			again = true;
			return running;
		}
		running = (async () => {
			try {
				do {
					again = false;
					await task().catch(onError);
				} while (again);
			} finally {
				running = null;
			}
		})();
		return running;
	};
	return run;
}

/**
 * LISTEN on OUTBOX_CHANNEL; `wake` runs on every notification and after every (re)connect of the
 * listening connection (notifications sent while it was away are not replayed). Returns unlisten.
 */
export async function listenForOutbox(sql: postgres.Sql, wake: () => void): Promise<() => Promise<void>> {
	const sub = await sql.listen(
		OUTBOX_CHANNEL,
		() => wake(),
		() => wake()
	);
	return () => sub.unlisten();
}
