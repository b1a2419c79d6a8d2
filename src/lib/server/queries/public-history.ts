/**
 * Price and stock history of a listing for the public pages, read from the observation
 * table (change points: each row holds until the next one). This is the guide's own reader;
 * the poller's history module and its /api/v1/listings/[id]/history route answer the same
 * question for the API, and the converter page's chart asks that route first.
 */
import { and, asc, desc, eq, gte, inArray, lt } from 'drizzle-orm';
import type { Database } from '../db/client';
import { observations } from '../db/schema';
import type { StockState } from '../../pricing';

export type HistoryRange = '30d' | '90d' | '1y';
export const RANGE_DAYS: Record<HistoryRange, number> = { '30d': 30, '90d': 90, '1y': 365 };

export interface HistoryPoint {
	at: string;
	priceMinor: number | null;
	currency: string | null;
	stock: StockState;
}

export interface HistoryFigures {
	/** Lowest price seen while buyable or not, over the window (minor units, listing currency). */
	lowestMinor: number | null;
	medianMinor: number | null;
	currency: string | null;
	/** Share of the window the listing was in stock (0..1). */
	inStockShare: number | null;
	restocks: number;
	/** Median length of completed in-stock spells, in days. */
	typicalStockDays: number | null;
}

/**
 * Figures over [from, to] from change points. `before` is the last point before the window
 * (its state holds at the start). Time-weighted: a state counts for as long as it held.
 */
export function historyFigures(points: HistoryPoint[], from: Date, to: Date, before: HistoryPoint | null = null): HistoryFigures {
	const all = before ? [{ ...before, at: from.toISOString() }, ...points] : points;
	const span = to.getTime() - from.getTime();
	let inStockMs = 0;
	let restocks = 0;
	const spells: number[] = [];
	let spellStart: number | null = null;
	const prices: number[] = [];
	let currency: string | null = null;
	for (let i = 0; i < all.length; i++) {
		const p = all[i];
		const start = Math.max(from.getTime(), Date.parse(p.at));
		const end = i + 1 < all.length ? Date.parse(all[i + 1].at) : to.getTime();
		if (p.priceMinor != null) {
			prices.push(p.priceMinor);
			currency = p.currency ?? currency;
		}
		const inStock = p.stock === 'in_stock';
		const prevInStock = i > 0 && all[i - 1].stock === 'in_stock';
		if (inStock) inStockMs += Math.max(0, end - start);
		if (inStock && !prevInStock) {
			if (i > 0) restocks++;
			spellStart = start;
		}
		if (!inStock && prevInStock && spellStart !== null) {
			spells.push((start - spellStart) / 86_400_000);
			spellStart = null;
		}
	}
	const median = (xs: number[]) => {
		if (xs.length === 0) return null;
		const s = [...xs].sort((a, b) => a - b);
		const m = Math.floor(s.length / 2);
		return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
	};
	return {
		lowestMinor: prices.length ? Math.min(...prices) : null,
		medianMinor: prices.length ? Math.round(median(prices)!) : null,
		currency,
		inStockShare: all.length && span > 0 ? Math.min(1, inStockMs / span) : null,
		restocks,
		typicalStockDays: median(spells)
	};
}

/** Keep at most `max` points: the first, the last, and evenly spaced ones between. */
export function thinPoints<T>(points: T[], max: number): T[] {
	if (points.length <= max || max < 2) return points;
	const out: T[] = [];
	const step = (points.length - 1) / (max - 1);
	for (let i = 0; i < max; i++) out.push(points[Math.round(i * step)]);
	return out;
}

/** A listing's history over a range, with its figures. */
export async function listingHistory(db: Database, listingId: number, range: HistoryRange, maxPoints = 400, now = new Date()) {
	const from = new Date(now.getTime() - RANGE_DAYS[range] * 86_400_000);
	const [rows, [before]] = await Promise.all([
		db
			.select({ at: observations.observedAt, priceMinor: observations.priceMinor, currency: observations.currency, stock: observations.stock })
			.from(observations)
			.where(and(eq(observations.listingId, listingId), gte(observations.observedAt, from)))
			.orderBy(asc(observations.observedAt), asc(observations.id)),
		db
			.select({ at: observations.observedAt, priceMinor: observations.priceMinor, currency: observations.currency, stock: observations.stock })
			.from(observations)
			.where(and(eq(observations.listingId, listingId), lt(observations.observedAt, from)))
			.orderBy(desc(observations.observedAt), desc(observations.id))
			.limit(1)
	]);
	const points: HistoryPoint[] = rows.map((r) => ({ ...r, at: r.at.toISOString() }));
	const prior: HistoryPoint | null = before ? { ...before, at: before.at.toISOString() } : null;
	return {
		listingId,
		range,
		from: from.toISOString(),
		to: now.toISOString(),
		points: thinPoints(prior ? [{ ...prior, at: from.toISOString() }, ...points] : points, maxPoints),
		figures: historyFigures(points, from, now, prior)
	};
}

/** 90-day figures for several listings at once (the converter page's where-to-buy table). */
export async function figuresForListings(db: Database, listingIds: number[], now = new Date()) {
	const out = new Map<number, HistoryFigures>();
	if (listingIds.length === 0) return out;
	const from = new Date(now.getTime() - 90 * 86_400_000);
	const rows = await db
		.select({ listingId: observations.listingId, at: observations.observedAt, priceMinor: observations.priceMinor, currency: observations.currency, stock: observations.stock })
		.from(observations)
		.where(inArray(observations.listingId, listingIds))
		.orderBy(asc(observations.listingId), asc(observations.observedAt), asc(observations.id));
	for (const id of listingIds) {
		const mine = rows.filter((r) => r.listingId === id).map((r) => ({ at: r.at.toISOString(), priceMinor: r.priceMinor, currency: r.currency, stock: r.stock }));
		const inside = mine.filter((p) => Date.parse(p.at) >= from.getTime());
		const before = mine.filter((p) => Date.parse(p.at) < from.getTime()).at(-1) ?? null;
		out.set(id, historyFigures(inside, from, now, before));
	}
	return out;
}
