/** Hourly clean-up: expired sessions, unused sign-in tokens and spent rate-limit counters. */
import { lt } from 'drizzle-orm';
import type { Database } from '../src/lib/server/db/client';
import { sessions, verificationTokens } from '../src/lib/server/db/schema';
import { pruneRateLimits } from '../src/lib/server/security/rate-limit';

export async function housekeeping(db: Database, now = new Date()) {
	const expiredSessions = await db.delete(sessions).where(lt(sessions.expires, now)).returning({ t: sessions.sessionToken });
	const expiredTokens = await db
		.delete(verificationTokens)
		.where(lt(verificationTokens.expires, now))
		.returning({ t: verificationTokens.token });
	const rateLimitRows = await pruneRateLimits(db, now);
	return { expiredSessions: expiredSessions.length, expiredTokens: expiredTokens.length, rateLimitRows };
}
