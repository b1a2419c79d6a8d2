/**
 * Acting on an unsubscribe token: pause the watch (or every watch of the member) and skip the
 * alerts still waiting for it. Idempotent: a second call changes nothing and reports the same.
 * A paused watch stays on /account/watches, where the member can resume it.
 */
import { sql } from 'drizzle-orm';
import { rowsOf, type Db } from './db';
import { verifyUnsubscribeToken, type UnsubscribeScope } from './token';

export interface UnsubscribeOutcome {
	scope: UnsubscribeScope;
	/** Watches this call paused (0 on a repeat). */
	paused: number;
	/** Waiting alerts this call skipped. */
	skipped: number;
	/** What the member stopped, in words, for the confirmation page. */
	what: string;
}

/** What a token would stop, without acting on it (for the GET confirmation page). */
export async function describeToken(
	db: Db,
	secret: string | undefined,
	token: string
): Promise<{ scope: UnsubscribeScope; what: string; alreadyStopped: boolean } | null> {
	const scope = verifyUnsubscribeToken(secret, token);
	if (!scope) return null;
	if (scope.kind === 'watch') {
		const [w] = rowsOf<{ paused: boolean; label: string | null }>(
			await db.execute(sql`
				select w.paused, c.brand || ' ' || c.model as label
				from watch w left join converter c on c.id = w.converter_id where w.id = ${scope.watchId}`)
		);
		if (!w) return { scope, what: 'this watch (it has been deleted)', alreadyStopped: true };
		return { scope, what: w.label ? `alerts for ${w.label}` : 'alerts for this rule', alreadyStopped: w.paused };
	}
	const [r] = rowsOf<{ active: number }>(
		await db.execute(sql`select count(*)::int as active from watch where user_id = ${scope.userId} and not paused`)
	);
	return { scope, what: 'every Scopegrade alert to this address', alreadyStopped: Number(r?.active ?? 0) === 0 };
}

/** Apply a token. Null when the token is malformed or forged. */
export async function unsubscribeWithToken(
	db: Db,
	secret: string | undefined,
	token: string
): Promise<UnsubscribeOutcome | null> {
	const described = await describeToken(db, secret, token);
	if (!described) return null;
	const { scope, what } = described;
	const watchFilter = scope.kind === 'watch' ? sql`id = ${scope.watchId}` : sql`user_id = ${scope.userId}`;
	const outboxFilter = scope.kind === 'watch' ? sql`watch_id = ${scope.watchId}` : sql`user_id = ${scope.userId}`;
	const paused = rowsOf<{ id: number }>(
		await db.execute(
			sql`update watch set paused = true, updated_at = now() where ${watchFilter} and not paused returning id`
		)
	);
	// Rows a sender holds right now ('sending') are left to it: it re-reads the watch before sending.
	const skipped = rowsOf<{ id: number }>(
		await db.execute(sql`
			update alert_outbox set status = 'skipped', last_error = 'unsubscribed'
			where ${outboxFilter} and status = 'pending' returning id`)
	);
	return { scope, paused: paused.length, skipped: skipped.length, what };
}
