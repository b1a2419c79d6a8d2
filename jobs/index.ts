/**
 * The jobs process: every scheduled task of the product, run with node-cron.
 * Each task lives in its own module under jobs/ and is registered here.
 */
import cron from 'node-cron';
import { createDb } from '../src/lib/server/db/client';
import { housekeeping } from './housekeeping';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 4 });

const tasks = [
	cron.schedule('17 * * * *', () => housekeeping(db).then((r) => console.log(`housekeeping: ${JSON.stringify(r)}`)), {
		name: 'housekeeping',
		noOverlap: true
	})
];
console.log(`jobs running: ${tasks.map((t) => t.name).join(', ')}`);

async function stop() {
	for (const t of tasks) await t.destroy();
	await sql.end({ timeout: 5 });
	process.exit(0);
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
