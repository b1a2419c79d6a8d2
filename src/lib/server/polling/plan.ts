/**
 * The adaptive schedule's inputs from the database, and a per-worker plan kept fresh: which listings
 * people wait for (active watches that a restock there would alert, or a good band), their stock
 * history, and their state now. The plan itself is pure ($lib/poll-plan).
 */
import { sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import type { StockState } from '../db/schema';
import { BANDS } from '../../enums';
import { BUYABLE_STOCK, isBuyable } from '../../pricing';
import type { StockPoint } from '../../restock';
import { planIntervals, type PlanInput, type PlannedInterval } from '../../poll-plan';

/** The good bands (Close or better, from the one BANDS list): a restock of those is waited for. */
export const GOOD_BANDS = BANDS.slice(0, BANDS.indexOf('close') + 1);

/** Re-plan this often: watches and histories change slowly. */
export const PLAN_REFRESH_MS = 10 * 60_000;
/** History the outlook reads for planning. */
export const HISTORY_DAYS = 365;

/**
 * What the plan needs of each active listing's stock history in the last HISTORY_DAYS, computed in
 * SQL so the planner gets a few rows per listing instead of every change point: the first known
 * reading, every reading whose buyable-or-not differs from the known one before it (the spell
 * boundaries listingSpells reads; 'unknown' readings and price changes do not end a spell), and the
 * latest change point of any kind (the plan's "last change"). listingSpells gives the same spells
 * from these as from the whole history, since every reading left out repeats the state before it.
 */
export async function loadStockTurns(db: Database, now: Date): Promise<Map<number, StockPoint[]>> {
	const since = new Date(now.getTime() - HISTORY_DAYS * 86_400_000).toISOString();
	const points = await db.execute<{ listing_id: number; observed_at: string | Date; stock: StockState }>(sql`
		with recent as (
			select o.id, o.listing_id, o.observed_at, o.stock from observation o
			join listing l on l.id = o.listing_id
			where l.active and l.delisted_at is null and o.observed_at >= ${since}::timestamptz
		),
		known as (
			select id, listing_id, observed_at, stock, stock in ${BUYABLE_STOCK} as buyable,
				lag(stock in ${BUYABLE_STOCK}) over (partition by listing_id order by observed_at, id) as buyable_before
			from recent where stock <> 'unknown'
		),
		latest as (
			select distinct on (listing_id) id, listing_id, observed_at, stock from recent
			order by listing_id, observed_at desc, id desc
		)
		select id, listing_id, observed_at, stock from known where buyable_before is distinct from buyable
		union
		select id, listing_id, observed_at, stock from latest
		order by listing_id, observed_at, id`);
	const byListing = new Map<number, StockPoint[]>();
	for (const p of points) {
		const id = Number(p.listing_id);
		if (!byListing.has(id)) byListing.set(id, []);
		byListing.get(id)!.push({ at: new Date(p.observed_at), stock: p.stock });
	}
	return byListing;
}

export async function loadPlanInputs(
	db: Database,
	now: Date
): Promise<{ inputs: PlanInput[]; current: Map<number, boolean | null> }> {
	const rows = await db.execute<{
		id: number;
		shop_id: number;
		interval: number;
		watched: boolean;
		good_band: boolean;
		current_stock: StockState | null;
	}>(sql`
		select l.id, l.shop_id, l.poll_interval_minutes as interval, ls.current_stock,
			exists (
				select 1 from watch w
				where not w.paused and (w.converter_id is null or w.converter_id = l.converter_id)
					and (w.shop_ids is null or cardinality(w.shop_ids) = 0 or l.shop_id = any(w.shop_ids))
			) as watched,
			exists (
				select 1 from revision r
				where r.converter_id = l.converter_id and r.seen_to is null and r.retired_at is null and r.band in ${GOOD_BANDS}
			) as good_band
		from listing l
		left join listing_state ls on ls.listing_id = l.id
		where l.active and l.delisted_at is null`);
	const byListing = await loadStockTurns(db, now);
	const inputs: PlanInput[] = [];
	const current = new Map<number, boolean | null>();
	for (const r of rows) {
		const id = Number(r.id);
		inputs.push({
			listingId: id,
			shopId: Number(r.shop_id),
			intervalMinutes: Number(r.interval),
			watched: !!r.watched,
			goodBand: !!r.good_band,
			points: byListing.get(id) ?? []
		});
		current.set(id, !r.current_stock || r.current_stock === 'unknown' ? null : isBuyable(r.current_stock));
	}
	return { inputs, current };
}

export interface Planner {
	/** Re-plan when the plan is older than PLAN_REFRESH_MS (or was never made). Never throws. */
	refresh(): Promise<void>;
	/** Minutes until the next regular poll of a listing now in `stock`; null when it has no plan. */
	intervalFor(listingId: number, stock: StockState): number | null;
}

export function createPlanner(
	db: Database,
	clock: () => Date,
	log: (line: string) => void = () => {},
	refreshMs = PLAN_REFRESH_MS
): Planner {
	let plan = new Map<number, PlannedInterval>();
	let madeAt = -Infinity;
	let pending: Promise<void> | null = null;
	return {
		refresh() {
			const now = clock();
			if (now.getTime() - madeAt < refreshMs) return Promise.resolve();
			pending ??= loadPlanInputs(db, now)
				.then(({ inputs, current }) => {
					plan = planIntervals(inputs, current, now);
					madeAt = now.getTime();
				})
				.catch((err) => log(`poll plan: ${err instanceof Error ? err.message : String(err)}; keeping the last one`))
				.finally(() => (pending = null));
			return pending;
		},
		intervalFor(listingId, stock) {
			const p = plan.get(listingId);
			if (!p) return null;
			return isBuyable(stock) ? p.in : p.out;
		}
	};
}
