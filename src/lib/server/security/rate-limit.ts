/**
 * Fixed-window rate limits counted in PostgreSQL (`rate_limit`), so they hold across app
 * instances and restarts. One atomic upsert per hit: a new window starts at 1, an open one
 * adds 1, and the answer says whether the hit is within the limit and when the window ends.
 * Free of `$env`/`$app` so tests and jobs load it directly.
 */
import { lt, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import { rateLimits } from '../db/schema';

export interface Limit {
	/** Part of the counter's key, e.g. `signin-address`. */
	name: string;
	max: number;
	windowSeconds: number;
}

export type LimitAnswer = { allowed: true } | { allowed: false; retryAfterSeconds: number; limit: Limit };

/** Count one hit on `limit` for `subject`; allowed while the window's hits are at most `max`. */
export async function hit(db: Database, limit: Limit, subject: string, now = new Date()): Promise<LimitAnswer> {
	const key = `${limit.name}:${subject}`;
	const rows = await db.execute<{ hits: number; window_start: string | Date }>(sql`
		insert into ${rateLimits} (key, window_start, hits) values (${key}, ${now.toISOString()}::timestamptz, 1)
		on conflict (key) do update set
			hits = case when ${rateLimits.windowStart} <= ${now.toISOString()}::timestamptz - make_interval(secs => ${limit.windowSeconds})
				then 1 else ${rateLimits.hits} + 1 end,
			window_start = case when ${rateLimits.windowStart} <= ${now.toISOString()}::timestamptz - make_interval(secs => ${limit.windowSeconds})
				then excluded.window_start else ${rateLimits.windowStart} end
		returning hits, window_start`);
	const row = rows[0];
	if (row.hits <= limit.max) return { allowed: true };
	const ends = new Date(row.window_start).getTime() + limit.windowSeconds * 1000;
	return { allowed: false, retryAfterSeconds: Math.max(1, Math.ceil((ends - now.getTime()) / 1000)), limit };
}

/** Hit every limit (each counts, so a refused client keeps its window full); the longest wait wins. */
export async function hitAll(db: Database, checks: Array<[Limit, string]>, now = new Date()): Promise<LimitAnswer> {
	let worst: LimitAnswer = { allowed: true };
	for (const [limit, subject] of checks) {
		const answer = await hit(db, limit, subject, now);
		if (!answer.allowed && (worst.allowed || answer.retryAfterSeconds > worst.retryAfterSeconds)) worst = answer;
	}
	return worst;
}

/** Housekeeping: drop counters whose window ended more than a day ago. */
export async function pruneRateLimits(db: Database, now = new Date()) {
	const gone = await db
		.delete(rateLimits)
		.where(lt(rateLimits.windowStart, new Date(now.getTime() - 24 * 3600_000)))
		.returning({ key: rateLimits.key });
	return gone.length;
}

/** Sign-in e-mail limits; env overrides exist for the test profile, which signs in often from one address. */
export function signInLimits(env: Record<string, string | undefined>): { perAddress: Limit; perClient: Limit } {
	const num = (v: string | undefined, d: number) => (v && /^[1-9][0-9]{0,6}$/.test(v) ? Number(v) : d);
	const windowSeconds = num(env.SIGNIN_LIMIT_WINDOW_SECONDS, 15 * 60);
	return {
		perAddress: { name: 'signin-address', max: num(env.SIGNIN_LIMIT_PER_ADDRESS, 5), windowSeconds },
		perClient: { name: 'signin-client', max: num(env.SIGNIN_LIMIT_PER_CLIENT, 20), windowSeconds }
	};
}

/** The words shown when a sign-in is refused for too many tries. */
export function tooManySignIns(retryAfterSeconds: number): string {
	const minutes = Math.ceil(retryAfterSeconds / 60);
	return `Too many sign-in links were asked for just now. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`;
}
