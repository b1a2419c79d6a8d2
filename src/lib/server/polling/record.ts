/**
 * Writing one poll's result, all in one transaction: the listing's polling state, a change point
 * (only when price, currency or stock state differ from listing_state.current_*), the stock events
 * that change implies, the alerts hook, the shop's daily outcome count, a delisting, a shop pause.
 *
 * Failures never touch current_* and never write an observation: an unreadable page, a timeout or
 * a 404 is "we do not know", not "out of stock".
 */
import { and, desc, eq, gt, ne, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import {
	listingStates,
	listings,
	observations,
	pollCounts,
	shopPollStates,
	stockEvents,
	type PollOutcome,
	type StockState
} from '../db/schema';
import { isBuyable } from '../../pricing';
import { NOT_FOUND_DELIST_AFTER, RESTOCK_QUIET_PERIOD_MS } from './config';
import type { ClaimedListing } from './claim';
import { backoffDelayMs, nextPollAfterSuccess } from './schedule';
import { refreshListingCards } from '../queries/read-model';

/** The transaction handle the hook receives: use it for every write that must commit with the event. */
export type PollerTx = Parameters<Parameters<Database['transaction']>[0]>[0];

/** A stock event as written to stock_event, handed to the onStockEvents hook. */
export interface StockEventRecord {
	id: number;
	listingId: number;
	observationId: number;
	kind: 'restock' | 'sellout' | 'price_drop';
	at: Date;
	priceMinor: number | null;
	currency: string | null;
	/** The last known (not 'unknown') stock state before this change. */
	previousStock: StockState | null;
	/** A restock within RESTOCK_QUIET_PERIOD_MS of the previous restock: recorded, not to be alerted. */
	quiet: boolean;
}

/**
 * Called inside the poll's transaction after the observation and its stock events are written.
 * Throwing rolls the whole change back (the next poll sees the change again and retries).
 */
export type StockEventsHook = (tx: PollerTx, events: StockEventRecord[]) => Promise<void>;

export type PollVerdict =
	| { kind: 'ok'; priceMinor: number; currency: string; stock: StockState; etag: string | null; lastModified: string | null; detail: string }
	| { kind: 'not_modified'; detail: string }
	| {
			kind: 'failure';
			outcome: Exclude<PollOutcome, 'ok' | 'not_modified'>;
			detail: string;
			/** Retry-After instant: the listing waits at least this long. */
			retryAt?: Date;
			/** Pause the whole shop until then (429, or 503 with Retry-After). */
			pauseShopUntil?: Date;
			/** 404: counts towards NOT_FOUND_DELIST_AFTER. */
			notFound?: boolean;
			/** 410: delist at once. */
			goneForGood?: boolean;
	  };

export interface PollResult {
	listingId: number;
	shopId: number;
	outcome: PollOutcome;
	at: Date;
	detail: string;
	/** True when a change point was written. */
	changed: boolean;
	observationId?: number;
	events: StockEventRecord[];
	nextPollAt?: Date;
	delisted?: boolean;
	/** Set when nothing was written: the lease had passed to another worker, or the write failed. */
	skipped?: 'lease_lost' | 'write_failed';
	error?: string;
}

export interface RecordOptions {
	now: Date;
	random: () => number;
	restockQuietMs?: number;
	onStockEvents?: StockEventsHook;
}

const clip = (s: string, n = 500) => (s.length > n ? `${s.slice(0, n - 1)}…` : s);

/** Store the verdict of one poll of a claimed listing. */
export async function recordPoll(db: Database, c: ClaimedListing, verdict: PollVerdict, o: RecordOptions): Promise<PollResult> {
	const now = o.now;
	const outcome: PollOutcome = verdict.kind === 'failure' ? verdict.outcome : verdict.kind;
	const base: PollResult = { listingId: c.listingId, shopId: c.shopId, outcome, at: now, detail: clip(verdict.detail), changed: false, events: [] };
	try {
		return await db.transaction(async (tx) => {
			const [state] = await tx
				.select()
				.from(listingStates)
				.where(eq(listingStates.listingId, c.listingId))
				.for('update');
			// The lease ran out and another worker took the listing: its poll is the one that counts.
			if (!state || state.leaseOwner !== c.leaseOwner) return { ...base, skipped: 'lease_lost' as const };

			const result: PollResult = { ...base };
			// "Poll now" is answered by this poll only if it was asked before the claim; a request that
			// came in while we were fetching stays set. (+1 ms: JS dates drop PostgreSQL's microseconds.)
			const clearRequest = c.pollRequestedAt
				? sql`case when ${listingStates.pollRequestedAt} < ${c.pollRequestedAt.toISOString()}::timestamptz + interval '1 millisecond' then null else ${listingStates.pollRequestedAt} end`
				: sql`${listingStates.pollRequestedAt}`;
			const common = { lastCheckedAt: now, lastOutcome: outcome, leaseOwner: null, leaseUntil: null, pollRequestedAt: clearRequest };

			if (verdict.kind === 'failure') {
				const failures = state.consecutiveFailures + 1;
				let next = new Date(now.getTime() + backoffDelayMs(c.pollIntervalMinutes, failures, o.random));
				if (verdict.retryAt && verdict.retryAt > next) next = verdict.retryAt;
				const notFound = verdict.notFound ? state.consecutiveNotFound + 1 : 0;
				await tx
					.update(listingStates)
					.set({ ...common, lastErrorAt: now, lastError: clip(verdict.detail), consecutiveFailures: failures, consecutiveNotFound: notFound, nextPollAt: next })
					.where(eq(listingStates.listingId, c.listingId));
				result.nextPollAt = next;
				if (verdict.goneForGood || notFound >= NOT_FOUND_DELIST_AFTER) {
					await tx.update(listings).set({ delistedAt: now, updatedAt: now }).where(and(eq(listings.id, c.listingId), sql`${listings.delistedAt} is null`));
					result.delisted = true;
				}
				if (verdict.pauseShopUntil) {
					await tx
						.insert(shopPollStates)
						.values({ shopId: c.shopId, pausedUntil: verdict.pauseShopUntil, pauseReason: clip(verdict.detail, 200), updatedAt: now })
						.onConflictDoUpdate({
							target: shopPollStates.shopId,
							set: {
								pausedUntil: sql`greatest(coalesce(${shopPollStates.pausedUntil}, excluded.paused_until), excluded.paused_until)`,
								pauseReason: sql`excluded.pause_reason`,
								updatedAt: now
							}
						});
				}
			} else {
				const next = nextPollAfterSuccess(now, c.pollIntervalMinutes, o.random);
				const success = { ...common, lastSuccessAt: now, consecutiveFailures: 0, consecutiveNotFound: 0, nextPollAt: next };
				result.nextPollAt = next;
				if (verdict.kind === 'not_modified') {
					await tx.update(listingStates).set(success).where(eq(listingStates.listingId, c.listingId));
				} else {
					const changed =
						verdict.priceMinor !== state.currentPriceMinor || verdict.currency !== state.currentCurrency || verdict.stock !== state.currentStock;
					const validators = { etag: verdict.etag, lastModified: verdict.lastModified };
					if (!changed) {
						await tx.update(listingStates).set({ ...success, ...validators }).where(eq(listingStates.listingId, c.listingId));
					} else {
						const [obs] = await tx
							.insert(observations)
							.values({ listingId: c.listingId, observedAt: now, priceMinor: verdict.priceMinor, currency: verdict.currency, stock: verdict.stock })
							.returning({ id: observations.id });
						result.changed = true;
						result.observationId = obs.id;
						result.events = await writeStockEvents(tx, c.listingId, obs.id, now, state, verdict, o.restockQuietMs ?? RESTOCK_QUIET_PERIOD_MS);
						if (result.events.length && o.onStockEvents) await o.onStockEvents(tx, result.events);
						await tx
							.update(listingStates)
							.set({
								...success,
								...validators,
								currentPriceMinor: verdict.priceMinor,
								currentCurrency: verdict.currency,
								currentStock: verdict.stock,
								currentSince: now
							})
							.where(eq(listingStates.listingId, c.listingId));
					}
				}
			}

			await tx
				.insert(pollCounts)
				.values({ shopId: c.shopId, day: now.toISOString().slice(0, 10), outcome, count: 1, lastAt: now, lastDetail: clip(verdict.detail) })
				.onConflictDoUpdate({
					target: [pollCounts.shopId, pollCounts.day, pollCounts.outcome],
					set: { count: sql`${pollCounts.count} + 1`, lastAt: sql`greatest(${pollCounts.lastAt}, excluded.last_at)`, lastDetail: sql`excluded.last_detail` }
				});
			// The public cards (read model) commit with the change they show.
			if (result.changed || result.delisted) await refreshListingCards(tx, [c.listingId]);
			return result;
		});
	} catch (err) {
		// Most likely the alerts hook failed. Nothing of the change was stored; free the listing and
		// try again soon, leaving current_* alone so the next poll sees the change again.
		const message = err instanceof Error ? err.message : String(err);
		const retry = new Date(now.getTime() + Math.min(c.pollIntervalMinutes, 5) * 60_000);
		await db
			.update(listingStates)
			.set({ leaseOwner: null, leaseUntil: null, lastErrorAt: now, lastError: clip(`internal: could not store the poll: ${message}`), nextPollAt: retry })
			.where(and(eq(listingStates.listingId, c.listingId), eq(listingStates.leaseOwner, c.leaseOwner)))
			.catch(() => {});
		return { ...base, skipped: 'write_failed', error: message };
	}
}

/**
 * Restock (not buyable -> buyable), sell-out (buyable -> a known not-buyable state) and price drop
 * (lower price, same currency, buyable before and after). Transitions are judged against the last
 * KNOWN stock state, so 'unknown' readings in between never fake a restock or a sell-out, and the
 * first reading of a new listing (nothing known before) emits nothing.
 */
async function writeStockEvents(
	tx: PollerTx,
	listingId: number,
	observationId: number,
	now: Date,
	state: { currentStock: StockState; currentPriceMinor: number | null; currentCurrency: string | null },
	offer: { priceMinor: number; currency: string; stock: StockState },
	quietMs: number
): Promise<StockEventRecord[]> {
	let previous: StockState | null = state.currentStock;
	if (previous === 'unknown') {
		const [known] = await tx
			.select({ stock: observations.stock })
			.from(observations)
			.where(and(eq(observations.listingId, listingId), ne(observations.stock, 'unknown'), ne(observations.id, observationId)))
			.orderBy(desc(observations.observedAt), desc(observations.id))
			.limit(1);
		previous = known?.stock ?? null;
	}
	const kinds: StockEventRecord['kind'][] = [];
	if (previous && offer.stock !== 'unknown') {
		if (!isBuyable(previous) && isBuyable(offer.stock)) kinds.push('restock');
		if (isBuyable(previous) && !isBuyable(offer.stock)) kinds.push('sellout');
	}
	if (
		previous &&
		isBuyable(previous) &&
		isBuyable(offer.stock) &&
		state.currentPriceMinor != null &&
		state.currentCurrency === offer.currency &&
		offer.priceMinor < state.currentPriceMinor
	) {
		kinds.push('price_drop');
	}
	const out: StockEventRecord[] = [];
	for (const kind of kinds) {
		let quiet = false;
		if (kind === 'restock') {
			const [recent] = await tx
				.select({ id: stockEvents.id })
				.from(stockEvents)
				.where(and(eq(stockEvents.listingId, listingId), eq(stockEvents.kind, 'restock'), gt(stockEvents.at, new Date(now.getTime() - quietMs))))
				.limit(1);
			quiet = !!recent;
		}
		const [row] = await tx
			.insert(stockEvents)
			.values({ listingId, observationId, kind, at: now, priceMinor: offer.priceMinor, currency: offer.currency, previousStock: previous, quiet })
			.returning({ id: stockEvents.id });
		out.push({ id: row.id, listingId, observationId, kind, at: now, priceMinor: offer.priceMinor, currency: offer.currency, previousStock: previous, quiet });
	}
	return out;
}
