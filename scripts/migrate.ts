import { drizzle } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import { applyMigrations } from '../src/lib/server/db/migrate';
import * as schema from '../src/lib/server/db/schema';
import { regradeStaleReports } from '../src/lib/server/grading';

await applyMigrations(process.env.DATABASE_URL);
console.log('migrations applied');

// Data step: reports made with an older level rubric are regraded (and band changes go to
// each revision's history), so existing databases follow a rubric change by themselves.
const sql = postgres(process.env.DATABASE_URL!, { max: 1, onnotice: () => {} });
try {
	const db = drizzle(sql, { schema });
	const done = await db.transaction((tx) => regradeStaleReports(tx));
	if (done.runs || done.revisions)
		console.log(
			`level reports regraded: ${done.runs} bench runs, ${done.revisions} revisions, ${done.bandChanges} band changes`
		);
} finally {
	await sql.end();
}
