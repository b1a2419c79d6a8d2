/**
 * The jobs process: every scheduled task of the product, run with node-cron (jobs/jobs.ts).
 * Each task lives in its own module under jobs/ and is registered there.
 */
import { createDb } from '../src/lib/server/db/client';
import { startJobs } from './jobs';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 4 });
const jobs = await startJobs(db, sql);
console.log(`jobs running: ${jobs.names.join(', ')}`);

async function stop() {
	await jobs.stop();
	await sql.end({ timeout: 5 });
	process.exit(0);
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
