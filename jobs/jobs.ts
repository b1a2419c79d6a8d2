/**
 * Every scheduled task of the product, started on one database pool (jobs/index.ts runs this as the
 * jobs process; bench:alerts starts it in-process with the same defaults).
 */
import cron from 'node-cron';
import type postgres from 'postgres';
import type { Database } from '../src/lib/server/db/client';
import { housekeeping } from './housekeeping';
import { createStorage, storageConfigFrom } from '../src/lib/server/storage/index';
import { schedulePoller } from './poller';
import { createAlertHook, quietHoursFromEnv } from '../src/lib/server/alerts/match';
import { DEFAULT_SENDER_CRON, senderTask } from './sender';
import { DEFAULT_DIGEST_CRON, digestTask } from './digest';
import { DEFAULT_EXPECTED_CRON, expectedTask } from './expected';
import { listenForOutbox, serialRunner } from './wake';
import { refreshShopRecords } from '../src/lib/server/queries/shops';

/** Shop record lines are worked out again every 10 minutes (SHOP_RECORDS_CRON). */
export const DEFAULT_SHOP_RECORDS_CRON = '*/10 * * * *';
import type { PollerOptions } from '../src/lib/server/polling';

export interface Jobs {
	names: Array<string | undefined>;
	stop(): Promise<void>;
}

export async function startJobs(
	db: Database,
	sql: postgres.Sql,
	env: Record<string, string | undefined> = process.env,
	extra: { poller?: PollerOptions; log?: (line: string) => void } = {}
): Promise<Jobs> {
	const log = extra.log ?? ((l: string) => console.log(l));
	const logError = (name: string) => (err: unknown) =>
		console.error(`${name}: ${err instanceof Error ? err.message : err}`);
	// Polls due shop listings every 30 s; restocks write alert outbox rows in the same transaction.
	// One quiet period (ALERT_QUIET_HOURS) for the poller's quiet flag and the alert matching.
	const quietHours = quietHoursFromEnv(env);
	const poller = schedulePoller(db, {
		onStockEvents: createAlertHook({ quietHours }),
		restockQuietMs: quietHours * 3_600_000,
		log,
		...extra.poller
	});
	const sendAlerts = senderTask(db, env);
	const sendDigests = digestTask(db, env);
	// One sender run at a time, whether the cron tick or a NOTIFY from the poller's commit asked for it.
	const runSender = serialRunner(
		() => sendAlerts().then((r) => r.claimed && log(`sender: ${JSON.stringify(r)}`)),
		logError('sender')
	);

	/** Object storage for removing unattached uploads; housekeeping skips that step when S3 is not configured. */
	const uploadStorage = () => {
		try {
			return createStorage(storageConfigFrom(env));
		} catch {
			return undefined;
		}
	};

	const shopRecordsTask = () =>
		refreshShopRecords(db)
			.then((r) => r.changed && log(`shop records: ${JSON.stringify(r)}`))
			.catch(logError('shop records'));

	const tasks = [
		poller.task,
		cron.schedule(
			'17 * * * *',
			() => housekeeping(db, new Date(), uploadStorage()).then((r) => log(`housekeeping: ${JSON.stringify(r)}`)),
			{
				name: 'housekeeping',
				noOverlap: true
			}
		),
		cron.schedule(env.SENDER_CRON || DEFAULT_SENDER_CRON, () => runSender(), { name: 'sender', noOverlap: true }),
		cron.schedule(
			env.DIGEST_CRON || DEFAULT_DIGEST_CRON,
			() =>
				sendDigests()
					.then((r) => r.members && log(`digest: ${JSON.stringify(r)}`))
					.catch(logError('digest')),
			{ name: 'digest', noOverlap: true }
		),
		cron.schedule(
			env.EXPECTED_CRON || DEFAULT_EXPECTED_CRON,
			() =>
				expectedTask(db)
					.then((r) => log(`expected grades: ${JSON.stringify(r)}`))
					.catch(logError('expected')),
			{ name: 'expected', noOverlap: true }
		),
		cron.schedule(env.SHOP_RECORDS_CRON || DEFAULT_SHOP_RECORDS_CRON, () => shopRecordsTask(), {
			name: 'shop records',
			noOverlap: true
		})
	];
	// the learn page shows the backtest figure from the first start on, listing rows their shop lines
	expectedTask(db).catch(logError('expected'));
	shopRecordsTask();
	const unlisten = await listenForOutbox(sql, () => void runSender());
	const names = [...tasks.map((t) => t.name), 'sender on NOTIFY'];
	return {
		names,
		async stop() {
			await unlisten().catch(() => {});
			for (const t of tasks) await t.destroy();
			await poller.poller.release().catch(() => 0);
			await runSender();
		}
	};
}
