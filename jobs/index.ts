/**
 * The jobs process: every scheduled task of the product, run with node-cron (jobs/jobs.ts).
 * Each task lives in its own module under jobs/ and is registered there.
 */
import { createDb } from '../src/lib/server/db/client';
import { startJobs } from './jobs';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 4 });
const jobs = await startJobs(db, sql);
console.log(`jobs running: ${jobs.names.join(', ')}`);

// One stop however many signals arrive: Ctrl-C reaches us from the terminal and from tsx, and
// npm start sends SIGTERM too; a second stop would end the pool under the first one's last
// sender run ("Failed query" while everything stops).
let stopping: Promise<void> | null = null;
function stop() {
	stopping ??= (async () => {
		await jobs.stop();
		await sql.end({ timeout: 5 });
		process.exit(0);
	})();
	return stopping;
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
