/**
 * Hourly clean-up: expired sessions, unused sign-in tokens, spent rate-limit counters, unattached
 * uploads, and converter-page marks no document needs any more.
 */
import { lt } from 'drizzle-orm';
import type { Database } from '../src/lib/server/db/client';
import { sessions, verificationTokens } from '../src/lib/server/db/schema';
import { pruneRateLimits } from '../src/lib/server/security/rate-limit';
import { removeUnattachedUploads } from '../src/lib/server/curate/uploads';
import type { Storage } from '../src/lib/server/storage/index';
import { pruneDetailMarks } from '../src/lib/server/queries/converter-doc';

export async function housekeeping(db: Database, now = new Date(), storage?: Storage) {
	const expiredSessions = await db
		.delete(sessions)
		.where(lt(sessions.expires, now))
		.returning({ t: sessions.sessionToken });
	const expiredTokens = await db
		.delete(verificationTokens)
		.where(lt(verificationTokens.expires, now))
		.returning({ t: verificationTokens.token });
	const rateLimitRows = await pruneRateLimits(db, now);
	const unattachedUploads = storage ? await removeUnattachedUploads(db, storage, now) : 0;
	const detailMarks = await pruneDetailMarks(db);
	return {
		expiredSessions: expiredSessions.length,
		expiredTokens: expiredTokens.length,
		rateLimitRows,
		unattachedUploads,
		detailMarks
	};
}
