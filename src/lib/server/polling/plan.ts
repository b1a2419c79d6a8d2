/**
 * The adaptive schedule's inputs from the database, and a per-worker plan kept fresh: which listings
 * people wait for (active watches that a restock there would alert, or a good band), their stock
 * history, and their state now. The plan itself is pure ($lib/poll-plan).
 */
import { sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import type { StockState } from '../db/schema';
import { isBuyable } from '../../pricing';
import { planIntervals, type PlanInput, type PlannedInterval } from '../../poll-plan';

/** Re-plan this often: watches and histories change slowly. */
export const PLAN_REFRESH_MS = 10 * 60_000;
/** History the outlook reads for planning. */
const HISTORY_DAYS = 365;

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
				where r.converter_id = l.converter_id and r.seen_to is null and r.retired_at is null and r.band in ('exact', 'close')
			) as good_band
		from listing l
		left join listing_state ls on ls.listing_id = l.id
		where l.active and l.delisted_at is null`);
	const since = new Date(now.getTime() - HISTORY_DAYS * 86_400_000).toISOString();
	const points = await db.execute<{ listing_id: number; observed_at: string | Date; stock: StockState }>(sql`
		select o.listing_id, o.observed_at, o.stock from observation o
		join listing l on l.id = o.listing_id
		where l.active and l.delisted_at is null and o.observed_at >= ${since}::timestamptz
		order by o.listing_id, o.observed_at, o.id`);
	const byListing = new Map<number, Array<{ at: Date; stock: StockState }>>();
	for (const p of points) {
		const id = Number(p.listing_id);
		if (!byListing.has(id)) byListing.set(id, []);
		byListing.get(id)!.push({ at: new Date(p.observed_at), stock: p.stock });
	}
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
