/**
 * Writing poll results. A batch of polls (one claim's results as they come in) is written in ONE
 * transaction with a fixed number of statements, whatever its size: the listings' polling state,
 * the change points (only when price, currency or stock state differ from listing_state.current_*),
 * the stock events those changes imply, the alerts hook with all of them, the shops' daily outcome
 * counts, delistings and shop pauses (the public cards are rebuilt after the commit, cards.ts). Per-listing transactions made the poller wait on the database
 * (every write of a shop queued on its poll_count row); a batch takes that row once.
 *
 * If a batch fails (most likely the alerts hook), nothing of it is stored and every poll of it is
 * written again on its own, so one bad listing cannot hold back the others.
 *
 * Failures never touch current_* and never write an observation: an unreadable page, a timeout or
 * a 404 is "we do not know", not "out of stock".
 */
import { and, asc, eq, inArray, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import {
	listingStates,
	listings,
	observations,
	shopPollStates,
	stockEvents,
	type PollOutcome,
	type StockState
} from '../db/schema';
import { isBuyable } from '../../pricing';
import { NOT_FOUND_DELIST_AFTER, RESTOCK_QUIET_PERIOD_MS } from './config';
import type { ClaimedListing } from './claim';
import { backoffDelayMs, nextPollAfterSuccess } from './schedule';

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
	| {
			kind: 'ok';
			/** Null when a discontinued page shows no price: the last known price is kept. */
			priceMinor: number | null;
			currency: string | null;
			stock: StockState;
			etag: string | null;
			lastModified: string | null;
			detail: string;
	  }
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
	/**
	 * Minutes until the next regular poll after a success (the adaptive schedule); defaults to the
	 * listing's own interval. Failures back off from the listing's own interval either way.
	 */
	intervalFor?: (c: ClaimedListing, stock: StockState) => number;
}

/** One poll waiting to be written. */
export interface PendingPoll {
	c: ClaimedListing;
	verdict: PollVerdict;
	/** The poller-clock time of the poll. */
	now: Date;
}

const clip = (s: string, n = 500) => (s.length > n ? `${s.slice(0, n - 1)}…` : s);

/** Store the verdict of one poll of a claimed listing (a batch of one). */
export async function recordPoll(
	db: Database,
	c: ClaimedListing,
	verdict: PollVerdict,
	o: RecordOptions
): Promise<PollResult> {
	const [r] = await recordPolls(db, [{ c, verdict, now: o.now }], o);
	return r;
}

/**
 * Store a batch of polls (distinct listings) in one transaction; results come back in input order.
 * Never throws: a batch that cannot be stored is retried poll by poll, and a poll that cannot be
 * stored on its own frees its listing for a retry soon ('write_failed').
 */
export async function recordPolls(
	db: Database,
	batch: PendingPoll[],
	o: Omit<RecordOptions, 'now'>
): Promise<PollResult[]> {
	if (!batch.length) return [];
	const ids = new Set(batch.map((p) => p.c.listingId));
	if (ids.size !== batch.length) throw new Error('recordPolls: a batch holds each listing once');
	try {
		return await db.transaction((tx) => writeBatch(tx, batch, o));
	} catch (err) {
		if (batch.length > 1) {
			const out: PollResult[] = [];
			for (const p of batch) out.push(...(await recordPolls(db, [p], o)));
			return out;
		}
		// Most likely the alerts hook failed. Nothing of the change was stored; free the listing and
		// try again soon, leaving current_* alone so the next poll sees the change again.
		const { c, now } = batch[0];
		const message = err instanceof Error ? err.message : String(err);
		const retry = new Date(now.getTime() + Math.min(c.pollIntervalMinutes, 5) * 60_000);
		await db
			.update(listingStates)
			.set({
				leaseOwner: null,
				leaseUntil: null,
				lastErrorAt: now,
				lastError: clip(`internal: could not store the poll: ${message}`),
				nextPollAt: retry
			})
			.where(and(eq(listingStates.listingId, c.listingId), eq(listingStates.leaseOwner, c.leaseOwner)))
			.catch(() => {});
		return [{ ...baseResult(batch[0]), skipped: 'write_failed', error: message }];
	}
}

function baseResult({ c, verdict, now }: PendingPoll): PollResult {
	const outcome: PollOutcome = verdict.kind === 'failure' ? verdict.outcome : verdict.kind;
	return {
		listingId: c.listingId,
		shopId: c.shopId,
		outcome,
		at: now,
		detail: clip(verdict.detail),
		changed: false,
		events: []
	};
}

/** One listing_state row's new values, as the bulk update reads them (see STATE_COLUMNS). */
interface StateRow {
	listing_id: number;
	now: string;
	outcome: PollOutcome;
	requested_before: string | null;
	next_poll_at: string;
	failures: number;
	not_found: number;
	success: boolean;
	error: string | null;
	set_validators: boolean;
	etag: string | null;
	last_modified: string | null;
	changed: boolean;
	price_minor: number | null;
	currency: string | null;
	stock: StockState | null;
}

/** A change waiting for its observation id. */
interface Change {
	item: PendingPoll;
	result: PollResult;
	offer: { priceMinor: number | null; currency: string | null; stock: StockState };
	state: { currentStock: StockState; currentPriceMinor: number | null; currentCurrency: string | null };
}

async function writeBatch(tx: PollerTx, batch: PendingPoll[], o: Omit<RecordOptions, 'now'>): Promise<PollResult[]> {
	const ids = batch.map((p) => p.c.listingId);
	// Locked in listing order, so two workers' batches can never wait on each other in a cycle.
	const states = await tx
		.select()
		.from(listingStates)
		.where(inArray(listingStates.listingId, ids))
		.orderBy(asc(listingStates.listingId))
		.for('update');
	const stateOf = new Map(states.map((s) => [s.listingId, s]));

	const results: PollResult[] = [];
	const rows: StateRow[] = [];
	const changes: Change[] = [];
	const delist: PendingPoll[] = [];
	const pauses: Array<{ shopId: number; until: Date; reason: string; now: Date }> = [];
	const written: PollResult[] = [];

	for (const item of batch) {
		const { c, verdict, now } = item;
		const state = stateOf.get(c.listingId);
		const result = baseResult(item);
		results.push(result);
		// The lease ran out and another worker took the listing: its poll is the one that counts.
		if (!state || state.leaseOwner !== c.leaseOwner) {
			result.skipped = 'lease_lost';
			continue;
		}
		written.push(result);
		// "Poll now" is answered by this poll only if it was asked before the claim; a request that
		// came in while we were fetching stays set (the update compares, +1 ms for lost microseconds).
		const row: StateRow = {
			listing_id: c.listingId,
			now: now.toISOString(),
			outcome: result.outcome,
			requested_before: c.pollRequestedAt ? c.pollRequestedAt.toISOString() : null,
			next_poll_at: '',
			failures: 0,
			not_found: 0,
			success: verdict.kind !== 'failure',
			error: null,
			set_validators: false,
			etag: null,
			last_modified: null,
			changed: false,
			price_minor: null,
			currency: null,
			stock: null
		};
		if (verdict.kind === 'failure') {
			const failures = state.consecutiveFailures + 1;
			let next = new Date(now.getTime() + backoffDelayMs(c.pollIntervalMinutes, failures, o.random));
			if (verdict.retryAt && verdict.retryAt > next) next = verdict.retryAt;
			row.failures = failures;
			row.not_found = verdict.notFound ? state.consecutiveNotFound + 1 : 0;
			row.error = clip(verdict.detail);
			row.next_poll_at = next.toISOString();
			result.nextPollAt = next;
			if (verdict.goneForGood || row.not_found >= NOT_FOUND_DELIST_AFTER) {
				delist.push(item);
				result.delisted = true;
			}
			if (verdict.pauseShopUntil)
				pauses.push({ shopId: c.shopId, until: verdict.pauseShopUntil, reason: clip(verdict.detail, 200), now });
		} else {
			const stockAfter = verdict.kind === 'ok' ? verdict.stock : state.currentStock;
			const interval = o.intervalFor ? o.intervalFor(c, stockAfter) : c.pollIntervalMinutes;
			const next = nextPollAfterSuccess(now, interval, o.random);
			row.next_poll_at = next.toISOString();
			result.nextPollAt = next;
			if (verdict.kind === 'ok') {
				row.set_validators = true;
				row.etag = verdict.etag;
				row.last_modified = verdict.lastModified;
				// A discontinued page without a price keeps the last known price rather than erasing it.
				const offer =
					verdict.priceMinor === null
						? { priceMinor: state.currentPriceMinor, currency: state.currentCurrency, stock: verdict.stock }
						: verdict;
				const changed =
					offer.priceMinor !== state.currentPriceMinor ||
					offer.currency !== state.currentCurrency ||
					offer.stock !== state.currentStock;
				if (changed) {
					Object.assign(row, {
						changed: true,
						price_minor: offer.priceMinor,
						currency: offer.currency,
						stock: offer.stock
					});
					changes.push({ item, result, offer, state });
				}
			}
		}
		rows.push(row);
	}

	if (changes.length) {
		const obs = await tx
			.insert(observations)
			.values(
				changes.map(({ item: { c, now }, offer }) => ({
					listingId: c.listingId,
					observedAt: now,
					priceMinor: offer.priceMinor,
					currency: offer.currency,
					stock: offer.stock
				}))
			)
			.returning({ id: observations.id, listingId: observations.listingId });
		const obsOf = new Map(obs.map((r) => [r.listingId, r.id]));
		for (const ch of changes) {
			ch.result.changed = true;
			ch.result.observationId = obsOf.get(ch.item.c.listingId)!;
		}
		const events = await writeStockEvents(tx, changes, o.restockQuietMs ?? RESTOCK_QUIET_PERIOD_MS);
		if (events.length && o.onStockEvents) await o.onStockEvents(tx, events);
	}

	for (const { c, now } of delist) {
		await tx
			.update(listings)
			.set({ delistedAt: now, updatedAt: now })
			.where(and(eq(listings.id, c.listingId), sql`${listings.delistedAt} is null`));
	}
	for (const p of pauses.sort((a, b) => a.shopId - b.shopId)) {
		await tx
			.insert(shopPollStates)
			.values({ shopId: p.shopId, pausedUntil: p.until, pauseReason: p.reason, updatedAt: p.now })
			.onConflictDoUpdate({
				target: shopPollStates.shopId,
				set: {
					pausedUntil: sql`greatest(coalesce(${shopPollStates.pausedUntil}, excluded.paused_until), excluded.paused_until)`,
					pauseReason: sql`excluded.pause_reason`,
					updatedAt: p.now
				}
			});
	}

	// One outcome count per shop, day and outcome for the whole batch, in key order (no lock cycles).
	const counts = new Map<
		string,
		{ shopId: number; day: string; outcome: PollOutcome; count: number; lastAt: Date; lastDetail: string }
	>();
	for (const r of written) {
		const day = r.at.toISOString().slice(0, 10);
		const key = `${r.shopId}|${day}|${r.outcome}`;
		const k = counts.get(key);
		if (!k)
			counts.set(key, { shopId: r.shopId, day, outcome: r.outcome, count: 1, lastAt: r.at, lastDetail: r.detail });
		else {
			k.count++;
			if (r.at >= k.lastAt) Object.assign(k, { lastAt: r.at, lastDetail: r.detail });
		}
	}
	// The listings' new state and the shops' counts in ONE statement, last: these are the rows two
	// batches share (poll_count per shop and day; card_dirty, marked by listing_state's trigger), so
	// each batch holds them only from this statement to its commit. Counts are taken in key order and
	// then the dirty marks in converter order, the same order in every batch (no lock cycles).
	const countRows = [...counts.entries()]
		.sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))
		.map(([, v], i) => ({
			ord: i,
			shop_id: v.shopId,
			day: v.day,
			outcome: v.outcome,
			count: v.count,
			last_at: v.lastAt.toISOString(),
			last_detail: v.lastDetail
		}));
	if (rows.length) {
		await tx.execute(sql`
			with state as (
				update listing_state ls set
					last_checked_at = v.now,
					last_outcome = v.outcome::poll_outcome,
					lease_owner = null,
					lease_until = null,
					poll_requested_at = case when v.requested_before is not null and ls.poll_requested_at < v.requested_before + interval '1 millisecond' then null else ls.poll_requested_at end,
					next_poll_at = v.next_poll_at,
					consecutive_failures = v.failures,
					consecutive_not_found = v.not_found,
					last_success_at = case when v.success then v.now else ls.last_success_at end,
					last_error_at = case when v.success then ls.last_error_at else v.now end,
					last_error = case when v.success then ls.last_error else v.error end,
					etag = case when v.set_validators then v.etag else ls.etag end,
					last_modified = case when v.set_validators then v.last_modified else ls.last_modified end,
					current_price_minor = case when v.changed then v.price_minor else ls.current_price_minor end,
					current_currency = case when v.changed then v.currency else ls.current_currency end,
					current_stock = case when v.changed then v.stock::stock_state else ls.current_stock end,
					current_since = case when v.changed then v.now else ls.current_since end
				from jsonb_to_recordset(${JSON.stringify(rows)}::jsonb) as v(
					listing_id int, now timestamptz, outcome text, requested_before timestamptz, next_poll_at timestamptz,
					failures int, not_found int, success boolean, error text, set_validators boolean, etag text, last_modified text,
					changed boolean, price_minor bigint, currency text, stock text)
				where ls.listing_id = v.listing_id
				returning 1
			)
			insert into poll_count (shop_id, day, outcome, count, last_at, last_detail)
			select c.shop_id, c.day, c.outcome::poll_outcome, c.count, c.last_at, c.last_detail
			from jsonb_to_recordset(${JSON.stringify(countRows)}::jsonb) as c(
				ord int, shop_id int, day date, outcome text, count int, last_at timestamptz, last_detail text)
			order by c.ord
			on conflict (shop_id, day, outcome) do update set
				count = poll_count.count + excluded.count,
				last_at = greatest(poll_count.last_at, excluded.last_at),
				last_detail = excluded.last_detail`);
	}
	// The public cards are marked dirty by trigger in this transaction; the poller rebuilds them after
	// the commit (cards.ts), so a batch never waits on another's rebuild.
	return results;
}

/**
 * Restock (not buyable -> buyable), sell-out (buyable -> a known not-buyable state) and price drop
 * (lower price, same currency, buyable before and after). Transitions are judged against the last
 * KNOWN stock state, so 'unknown' readings in between never fake a restock or a sell-out, and the
 * first reading of a new listing (nothing known before) emits nothing. Fills each change's result.
 */
async function writeStockEvents(tx: PollerTx, changes: Change[], quietMs: number): Promise<StockEventRecord[]> {
	// The last known state before an 'unknown' current one, for those listings only.
	const unknownIds = changes.filter((ch) => ch.state.currentStock === 'unknown').map((ch) => ch.item.c.listingId);
	const lastKnown = new Map<number, StockState>();
	if (unknownIds.length) {
		const newObs = changes.map((ch) => ch.result.observationId!);
		const rows = await tx.execute<{ listing_id: number; stock: StockState }>(sql`
			select distinct on (listing_id) listing_id, stock from ${observations}
			where listing_id in ${unknownIds} and stock <> 'unknown' and id not in ${newObs}
			order by listing_id, observed_at desc, id desc`);
		for (const r of rows) lastKnown.set(Number(r.listing_id), r.stock);
	}
	const planned: Array<Omit<StockEventRecord, 'id'> & { ch: Change }> = [];
	for (const ch of changes) {
		const { offer, state } = ch;
		const previous: StockState | null =
			state.currentStock === 'unknown' ? (lastKnown.get(ch.item.c.listingId) ?? null) : state.currentStock;
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
			offer.priceMinor != null &&
			offer.priceMinor < state.currentPriceMinor
		) {
			kinds.push('price_drop');
		}
		for (const kind of kinds) {
			const { c, now } = ch.item;
			planned.push({
				ch,
				listingId: c.listingId,
				observationId: ch.result.observationId!,
				kind,
				at: now,
				priceMinor: offer.priceMinor,
				currency: offer.currency,
				previousStock: previous,
				quiet: false
			});
		}
	}
	if (!planned.length) return [];
	const restockIds = planned.filter((e) => e.kind === 'restock').map((e) => e.listingId);
	if (restockIds.length) {
		const recent = await tx
			.select({ listingId: stockEvents.listingId, last: sql<string>`max(${stockEvents.at})` })
			.from(stockEvents)
			.where(and(inArray(stockEvents.listingId, restockIds), eq(stockEvents.kind, 'restock')))
			.groupBy(stockEvents.listingId);
		const lastRestock = new Map(recent.map((r) => [r.listingId, new Date(r.last).getTime()]));
		for (const e of planned) {
			const last = lastRestock.get(e.listingId);
			if (e.kind === 'restock' && last !== undefined) e.quiet = last > e.at.getTime() - quietMs;
		}
	}
	const rows = await tx
		.insert(stockEvents)
		.values(planned.map(({ ch: _ch, ...e }) => e))
		.returning({ id: stockEvents.id, observationId: stockEvents.observationId, kind: stockEvents.kind });
	const idOf = new Map(rows.map((r) => [`${r.observationId}|${r.kind}`, r.id]));
	const out: StockEventRecord[] = [];
	for (const { ch, ...e } of planned) {
		const event: StockEventRecord = { id: idOf.get(`${e.observationId}|${e.kind}`)!, ...e };
		ch.result.events.push(event);
		out.push(event);
	}
	return out;
}
