/**
 * The jobs process: every scheduled task of the product, run with node-cron.
 * Each task lives in its own module under jobs/ and is registered here.
 */
import cron from 'node-cron';
import { createDb } from '../src/lib/server/db/client';
import { housekeeping } from './housekeeping';
import { schedulePoller } from './poller';
import { createAlertHook, quietHoursFromEnv } from '../src/lib/server/alerts/match';
import { DEFAULT_SENDER_CRON, senderTask } from './sender';
import { DEFAULT_DIGEST_CRON, digestTask } from './digest';
import { DEFAULT_EXPECTED_CRON, expectedTask } from './expected';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 4 });

// Polls due shop listings every 30 s; restocks write alert outbox rows in the same transaction.
// One quiet period (ALERT_QUIET_HOURS) for the poller's quiet flag and the alert matching.
const quietHours = quietHoursFromEnv(process.env);
const poller = schedulePoller(db, { onStockEvents: createAlertHook({ quietHours }), restockQuietMs: quietHours * 3_600_000 });
const sendAlerts = senderTask(db);
const sendDigests = digestTask(db);
const logError = (name: string) => (err: unknown) => console.error(`${name}: ${err instanceof Error ? err.message : err}`);

const tasks = [
	poller.task,
	cron.schedule('17 * * * *', () => housekeeping(db).then((r) => console.log(`housekeeping: ${JSON.stringify(r)}`)), {
		name: 'housekeeping',
		noOverlap: true
	}),
	cron.schedule(
		process.env.SENDER_CRON || DEFAULT_SENDER_CRON,
		() =>
			sendAlerts()
				.then((r) => r.claimed && console.log(`sender: ${JSON.stringify(r)}`))
				.catch(logError('sender')),
		{ name: 'sender', noOverlap: true }
	),
	cron.schedule(
		process.env.DIGEST_CRON || DEFAULT_DIGEST_CRON,
		() =>
			sendDigests()
				.then((r) => r.members && console.log(`digest: ${JSON.stringify(r)}`))
				.catch(logError('digest')),
		{ name: 'digest', noOverlap: true }
	),
	cron.schedule(
		process.env.EXPECTED_CRON || DEFAULT_EXPECTED_CRON,
		() =>
			expectedTask(db)
				.then((r) => console.log(`expected grades: ${JSON.stringify(r)}`))
				.catch(logError('expected')),
		{ name: 'expected', noOverlap: true }
	)
];
// the learn page shows the backtest figure from the first start on
expectedTask(db).catch(logError('expected'));
console.log(`jobs running: ${tasks.map((t) => t.name).join(', ')}`);

async function stop() {
	for (const t of tasks) await t.destroy();
	await poller.poller.release().catch(() => 0);
	await sql.end({ timeout: 5 });
	process.exit(0);
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
