/**
 * Daily digest job: gathers digest-mode alerts into one message per member per day, at the
 * member's digest hour in their time zone. Registered in jobs/index.ts (DIGEST_CRON, default
 * five past every hour, so each member's own hour is met); `tsx jobs/digest.ts` runs one pass.
 */
import type { Database } from '../src/lib/server/db/client';
import { createDb } from '../src/lib/server/db/client';
import { smtpConfigFrom } from '../src/lib/server/mail/transport';
import { sendDigests } from '../src/lib/server/alerts/digest';
import { senderOptionsFromEnv } from '../src/lib/server/alerts/sender';

export const DEFAULT_DIGEST_CRON = '5 * * * *';

/** One digest pass for the jobs process, configured from the environment. */
export function digestTask(db: Database, env: Record<string, string | undefined> = process.env) {
	const options = senderOptionsFromEnv(env, smtpConfigFrom(env));
	return () => sendDigests(db, options);
}

if (import.meta.url === `file://${process.argv[1]}`) {
	const { db, sql } = createDb(process.env.DATABASE_URL, { max: 2 });
	try {
		console.log(`digest: ${JSON.stringify(await digestTask(db)())}`);
	} finally {
		await sql.end({ timeout: 5 });
	}
}
