/**
 * The adaptive poll schedule: how often to poll each listing of a shop so restocks that people wait
 * for are seen soon, without asking the shop for more than the fixed schedule did. Pure.
 *
 * - Budget: a shop's requests per day stay what the listings' own intervals give
 *   (sum of 1440 / poll_interval_minutes); only their split between listings changes.
 * - Weight per listing: out of stock with watchers or a good band weighs most, more again when its
 *   restock outlook (Kaplan-Meier, $lib/restock) says a restock is likely within the horizon; a
 *   listing that has not changed for a long time and that nobody waits for weighs least.
 * - Interval = C / weight, clamped to [MIN_INTERVAL_MINUTES, own interval x MAX_STRETCH], with C
 *   solved per shop so the budget holds. The per-shop concurrency and spacing limits still apply
 *   to every request (the poller's gate), whatever the plan says.
 */
import { endsWithin, kaplanMeier, listingSpells, type StockPoint } from './restock';

/** Never poll one listing more often than this (a shop's page changes little within minutes). */
export const MIN_INTERVAL_MINUTES = 5;
/** Never stretch a listing's own interval more than this many times. */
export const MAX_STRETCH = 6;
/** Outlook horizon: the chance of a restock within this long raises the weight. */
export const RESTOCK_HORIZON_MS = 6 * 3_600_000;
/** No change for this long and nobody waiting: a quiet listing. */
export const QUIET_AFTER_MS = 21 * 86_400_000;

export interface PlanInput {
	listingId: number;
	shopId: number;
	/** The listing's own (curator-set) interval: the fixed schedule. */
	intervalMinutes: number;
	/** Active watches that would alert on this listing's restock. */
	watched: boolean;
	/** The converter's band is a good one (exact or close). */
	goodBand: boolean;
	/** Change points, oldest first (stock only is needed). */
	points: readonly StockPoint[];
}

export interface PlannedInterval {
	/** Minutes between polls while out of stock (or unknown). */
	out: number;
	/** Minutes between polls while buyable. */
	in: number;
}

/** How much a listing matters for the next while, in the state it is in (`buyable` or not). */
export function listingWeight(input: PlanInput, buyable: boolean | null, now: Date): number {
	const spells = listingSpells(input.points, now);
	const waitedFor = input.watched || input.goodBand;
	const lastChange = input.points.length ? input.points[input.points.length - 1].at.getTime() : null;
	const quiet = !input.watched && (lastChange === null || now.getTime() - lastChange > QUIET_AFTER_MS);
	if (buyable === false && waitedFor) {
		// The chance it restocks within the horizon, from its own history; a middling guess without one.
		const km = kaplanMeier(spells.out);
		const age = spells.current && !spells.current.buyable ? now.getTime() - spells.current.since.getTime() : 0;
		const soon = km.events >= 3 ? (endsWithin(km, age, RESTOCK_HORIZON_MS) ?? 0.1) : 0.25;
		return (input.watched ? 6 : 3) * (0.5 + 2 * soon);
	}
	if (quiet) return 0.25;
	return 1;
}

const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));

/**
 * Plan every listing's interval, shop by shop. `current` says each listing's state now (buyable,
 * not buyable, or unknown = null). Returns minutes per listing for either state; the budget is met
 * for the states given.
 */
export function planIntervals(
	inputs: readonly PlanInput[],
	current: ReadonlyMap<number, boolean | null>,
	now: Date
): Map<number, PlannedInterval> {
	const out = new Map<number, PlannedInterval>();
	const byShop = new Map<number, PlanInput[]>();
	for (const i of inputs) byShop.set(i.shopId, [...(byShop.get(i.shopId) ?? []), i]);
	for (const list of byShop.values()) {
		const budget = list.reduce((n, i) => n + 1 / i.intervalMinutes, 0);
		const rows = list.map((i) => {
			const state = current.get(i.listingId) ?? null;
			return {
				i,
				wNow: listingWeight(i, state === true, now),
				wOut: listingWeight(i, false, now),
				wIn: listingWeight(i, true, now),
				lo: Math.min(MIN_INTERVAL_MINUTES, i.intervalMinutes),
				hi: i.intervalMinutes * MAX_STRETCH
			};
		});
		// Polls per minute for a given C; increasing C lowers it, so bisect on C (log scale).
		const rate = (c: number) => rows.reduce((n, r) => n + 1 / clamp(c / r.wNow, r.lo, r.hi), 0);
		let lo = 1e-3;
		let hi = 1e7;
		for (let k = 0; k < 80; k++) {
			const mid = Math.sqrt(lo * hi);
			if (rate(mid) > budget) lo = mid;
			else hi = mid;
		}
		const c = hi;
		for (const r of rows) {
			out.set(r.i.listingId, { out: clamp(c / r.wOut, r.lo, r.hi), in: clamp(c / r.wIn, r.lo, r.hi) });
		}
	}
	return out;
}
