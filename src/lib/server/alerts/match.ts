/**
 * Matching: turns stock events (written by the poller) into alert_outbox rows, inside the
 * poller's own transaction, so an alert exists exactly when its event does.
 *
 * - Only `restock` events, and `price_drop` events for watches with also_price_drops while
 *   the listing is buyable, can alert; sell-outs never do.
 * - A restock within the quiet period after the listing's previous alerting restock is
 *   marked `quiet` and alerts nobody (flapping stock must not spam).
 * - One outbox row per (watch, stock event): the unique key plus ON CONFLICT DO NOTHING
 *   make a replayed event or a second worker harmless.
 *
 * Transitions are never re-detected here: the stock_event rows are the truth.
 */
import { sql } from 'drizzle-orm';
import { convertMinor, isBuyable, type RatesPerEur, type StockState } from '../../pricing';
import { loadRates } from '../queries/offers';
import type { Database } from '../db/client';
import { rowsOf, type Db } from './db';

/** The NOTIFY channel that says "new alert_outbox rows committed" (jobs/wake.ts listens). */
export const OUTBOX_CHANNEL = 'sg_alert_outbox';

/** The shape the poller hands to its `onStockEvents` hook. */
export interface StockEventInput {
	id: number;
	listingId: number;
	kind: 'restock' | 'sellout' | 'price_drop';
	at: Date;
	priceMinor: number | null;
	currency: string | null;
	previousStock: StockState | null;
}

export type StockEventsHook = (tx: Db, events: StockEventInput[]) => Promise<void>;

export interface MatchOptions {
	/** Hours after a listing's previous alerting restock during which another restock stays quiet. */
	quietHours?: number;
	/** Rates per EUR; loaded from exchange_rate once per call when absent. */
	rates?: RatesPerEur;
}

export interface MatchResult {
	eventId: number;
	/** What happened to the event: alerted (rows may be 0 when nobody matches), quiet or ignored. */
	outcome: 'matched' | 'quiet' | 'ignored';
	reason?: string;
	/** Outbox rows this call created (0 on a replay). */
	created: number;
}

export const DEFAULT_QUIET_HOURS = 12;

/** ALERT_QUIET_HOURS from an environment object (0 switches the quiet period off). */
export function quietHoursFromEnv(env: Record<string, string | undefined> = process.env): number {
	const raw = env.ALERT_QUIET_HOURS;
	if (raw === undefined || raw.trim() === '') return DEFAULT_QUIET_HOURS;
	const n = Number(raw);
	if (!Number.isFinite(n) || n < 0 || n > 24 * 30) {
		throw new Error(`ALERT_QUIET_HOURS must be a number of hours between 0 and 720, got "${raw}"`);
	}
	return n;
}

interface EventContext {
	id: number;
	listing_id: number;
	kind: StockEventInput['kind'];
	at: Date;
	price_minor: string | number | null;
	currency: string | null;
	quiet: boolean;
	observation_id: number;
	obs_stock: StockState;
	converter_id: number;
	has_audio_out: boolean;
	shop_id: number;
	shop_region: string;
	ships_to: string | string[];
	listing_active: boolean;
	delisted_at: Date | null;
}

/** postgres-js returns enum arrays as their text literal: "{eu,uk}". */
function pgArray(value: string | string[] | null): string[] {
	if (Array.isArray(value)) return value;
	if (!value) return [];
	return value
		.replace(/^\{|\}$/g, '')
		.split(',')
		.filter(Boolean);
}

/**
 * The best band among a converter's current revisions (seen_to null, not retired); when none is
 * current, the best of all its graded revisions. Null when nothing is graded.
 */
export async function bestCurrentBand(db: Db, converterId: number): Promise<string | null> {
	const rows = rowsOf<{ band: string | null; current: boolean }>(
		await db.execute(sql`
			select min(band) as band, (seen_to is null and retired_at is null) as current
			from revision where converter_id = ${converterId} and band is not null
			group by 2`)
	);
	return rows.find((r) => r.current)?.band ?? rows.find((r) => !r.current)?.band ?? null;
}

/**
 * The best expected band (a prediction, not yet measured) among a converter's current revisions
 * that have no measured band; when none is current, among all of them. Null when there is none.
 */
export async function bestExpectedBand(db: Db, converterId: number): Promise<string | null> {
	const rows = rowsOf<{ band: string | null; current: boolean }>(
		await db.execute(sql`
			select min(expected_band) as band, (seen_to is null and retired_at is null) as current
			from revision where converter_id = ${converterId} and band is null and expected_band is not null
			group by 2`)
	);
	return rows.find((r) => r.current)?.band ?? rows.find((r) => !r.current)?.band ?? null;
}

/**
 * Match stock events against watches and write their outbox rows. Call it inside the
 * transaction that wrote the events.
 */
export async function matchStockEvents(
	tx: Db,
	events: StockEventInput[],
	options: MatchOptions = {}
): Promise<MatchResult[]> {
	const quietHours = options.quietHours ?? quietHoursFromEnv();
	let rates = options.rates;
	const results: MatchResult[] = [];
	for (const ev of events) {
		if (ev.kind === 'sellout') {
			results.push({ eventId: ev.id, outcome: 'ignored', reason: 'sell-outs never alert', created: 0 });
			continue;
		}
		const [ctx] = rowsOf<EventContext>(
			await tx.execute(sql`
				select e.id, e.listing_id, e.kind, e.at, e.price_minor, e.currency, e.quiet, e.observation_id,
					o.stock as obs_stock, l.converter_id, c.has_audio_out, s.id as shop_id, s.region as shop_region,
					s.ships_to, (l.active and s.active) as listing_active, l.delisted_at
				from stock_event e
				join observation o on o.id = e.observation_id
				join listing l on l.id = e.listing_id
				join shop s on s.id = l.shop_id
				join converter c on c.id = l.converter_id
				where e.id = ${ev.id}`)
		);
		if (!ctx) throw new Error(`stock event ${ev.id} is not in the database: call the hook after inserting it`);
		const at = new Date(ctx.at);
		if (ctx.quiet) {
			results.push({ eventId: ev.id, outcome: 'quiet', reason: 'already marked quiet', created: 0 });
			continue;
		}
		if (!ctx.listing_active || ctx.delisted_at) {
			results.push({ eventId: ev.id, outcome: 'ignored', reason: 'listing or shop inactive', created: 0 });
			continue;
		}
		if (ctx.kind === 'restock' && quietHours > 0) {
			// The previous restock that was not itself quiet: flapping alerts at most once per period.
			const since = new Date(at.getTime() - quietHours * 3_600_000);
			const [prev] = rowsOf<{ id: number }>(
				await tx.execute(sql`
					select id from stock_event
					where listing_id = ${ctx.listing_id} and kind = 'restock' and not quiet and id <> ${ctx.id}
						and at > ${since.toISOString()}::timestamptz
						and (at < ${at.toISOString()}::timestamptz or (at = ${at.toISOString()}::timestamptz and id < ${ctx.id}))
					limit 1`)
			);
			if (prev) {
				await tx.execute(sql`update stock_event set quiet = true where id = ${ctx.id}`);
				results.push({
					eventId: ev.id,
					outcome: 'quiet',
					reason: `restock ${prev.id} less than ${quietHours} h before`,
					created: 0
				});
				continue;
			}
		}
		if (ctx.kind === 'price_drop' && !isBuyable(ctx.obs_stock)) {
			results.push({ eventId: ev.id, outcome: 'ignored', reason: 'price drop while not buyable', created: 0 });
			continue;
		}

		rates ??= await loadRates(tx as unknown as Database);
		const band = await bestCurrentBand(tx, ctx.converter_id);
		// an expected grade meets a band limit only for watches that chose to include them
		const expectedBand = await bestExpectedBand(tx, ctx.converter_id);
		const priceMinor = ctx.price_minor == null ? null : Number(ctx.price_minor);
		// The event's price in every currency we have a rate for; a rule in a currency without a
		// rate cannot be compared, so it does not match (never guess a price).
		const priceIn: Record<string, number> = {};
		if (priceMinor != null && ctx.currency) {
			for (const cur of new Set([...Object.keys(rates), ctx.currency])) {
				const v = convertMinor(priceMinor, ctx.currency, cur, rates);
				if (v != null) priceIn[cur] = v;
			}
		}
		const served = `{${[...new Set([ctx.shop_region, ...pgArray(ctx.ships_to)])].join(',')}}`;
		const priceDrop = ctx.kind === 'price_drop';
		const inserted = rowsOf<{ id: number }>(
			await tx.execute(sql`
				insert into alert_outbox (watch_id, stock_event_id, user_id, mode, status, next_attempt_at)
				select w.id, ${ctx.id}, w.user_id, coalesce(mp.alert_mode, 'instant'), 'pending', now()
				from watch w
				left join member_pref mp on mp.user_id = w.user_id
				where not w.paused
					and (w.converter_id is null or w.converter_id = ${ctx.converter_id})
					and (w.min_band is null or ${band}::band <= w.min_band
						or (w.include_expected and ${expectedBand}::band <= w.min_band))
					and (w.max_price_minor is null or (${JSON.stringify(priceIn)}::jsonb ->> w.price_currency)::bigint <= w.max_price_minor)
					and (w.region is null or w.region = any(${served}::region[]))
					and (not w.needs_audio or ${ctx.has_audio_out})
					and (w.shop_ids is null or cardinality(w.shop_ids) = 0 or ${ctx.shop_id} = any(w.shop_ids))
					and (${!priceDrop} or w.also_price_drops)
					-- A restock at a lower price writes two events for one observation: alert once.
					and not exists (
						select 1 from alert_outbox o2 join stock_event e2 on e2.id = o2.stock_event_id
						where o2.watch_id = w.id and e2.observation_id = ${ctx.observation_id} and e2.id <> ${ctx.id})
				on conflict (watch_id, stock_event_id) do nothing
				returning id`)
		);
		results.push({ eventId: ev.id, outcome: 'matched', created: inserted.length });
	}
	return results;
}

/**
 * A hook with the poller's `onStockEvents` shape. Options are read once (quiet period from
 * ALERT_QUIET_HOURS unless given).
 */
export function createAlertHook(options: Omit<MatchOptions, 'rates'> = {}): StockEventsHook {
	const quietHours = options.quietHours ?? quietHoursFromEnv();
	return async (tx, events) => {
		const results = await matchStockEvents(tx, events, { quietHours });
		// Wakes the senders listening on OUTBOX_CHANNEL. PostgreSQL delivers a NOTIFY when the
		// transaction commits and drops it on rollback, so a sender never looks before the rows exist.
		if (results.some((r) => r.created > 0)) await tx.execute(sql`select pg_notify(${OUTBOX_CHANNEL}, '')`);
	};
}
