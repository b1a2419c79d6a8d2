/** Hourly clean-up: expired sessions and unused sign-in tokens. */
import { lt } from 'drizzle-orm';
import type { Database } from '../src/lib/server/db/client';
import { sessions, verificationTokens } from '../src/lib/server/db/schema';

export async function housekeeping(db: Database, now = new Date()) {
	const expiredSessions = await db.delete(sessions).where(lt(sessions.expires, now)).returning({ t: sessions.sessionToken });
	const expiredTokens = await db
		.delete(verificationTokens)
		.where(lt(verificationTokens.expires, now))
		.returning({ t: verificationTokens.token });
	return { expiredSessions: expiredSessions.length, expiredTokens: expiredTokens.length };
}
