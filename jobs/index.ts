/**
 * The jobs process: every scheduled task of the product, run with node-cron.
 * Each task lives in its own module under jobs/ and is registered here.
 */
import cron from 'node-cron';
import { createDb } from '../src/lib/server/db/client';
import { housekeeping } from './housekeeping';
import { schedulePoller } from './poller';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 4 });

// Polls due shop listings every 30 s. Alerts plug in here: schedulePoller(db, { onStockEvents }).
const poller = schedulePoller(db);

const tasks = [
	poller.task,
	cron.schedule('17 * * * *', () => housekeeping(db).then((r) => console.log(`housekeeping: ${JSON.stringify(r)}`)), {
		name: 'housekeeping',
		noOverlap: true
	})
];
console.log(`jobs running: ${tasks.map((t) => t.name).join(', ')}`);

async function stop() {
	for (const t of tasks) await t.destroy();
	await poller.poller.release().catch(() => 0);
	await sql.end({ timeout: 5 });
	process.exit(0);
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
