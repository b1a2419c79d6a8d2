/**
 * Price and stock history of listings, read from change points (observation rows: one per change of
 * price, currency or stock state). Shop health and shop records are in ./shops.
 *
 * Definitions used by every figure (documented for the public pages):
 * - Between two change points the listing is taken to have kept the earlier point's values; the last
 *   point holds until `to` (now, or the delisting time). Time before the first point is not counted.
 * - Lowest and median price are over time with a known price in the window, whatever the stock state,
 *   in the currency of the latest priced point (a shop that switched currency is not mixed). The
 *   median is TIME-WEIGHTED: the price the listing showed for half of that time or more.
 * - Share of time in stock is buyable time (in stock or pre-order, as isBuyable) over time with a
 *   known stock state; 'unknown' spans count in neither.
 * - A restock is a change point going from a known not-buyable state to buyable ('unknown' readings in
 *   between are skipped, as the poller does). A restock's duration is the span from a restock to the
 *   next sell-out; the typical duration is the median of spells that ENDED in the window (open ones
 *   are not yet measurable).
 */
import { eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { idArray } from '../db/prepared';
import { listingStates, listings, shops, type PollOutcome, type StockState } from '../db/schema';
import {
	BUYABLE_STOCK,
	bestOfferByConverter,
	isBuyable,
	REGION_CODES,
	REGION_CURRENCY,
	type PricedOffer,
	type Region
} from '../../pricing';
import { currentOffers, loadRates } from './offers';

const DAY = 86_400_000;
/** The longest window of a listing's figures (30 and 90 days). */
const FIGURE_DAYS = 90;

export interface ChangePoint {
	at: Date;
	priceMinor: number | null;
	currency: string | null;
	stock: StockState;
}

export interface WindowFigures {
	from: Date;
	to: Date;
	/** Currency of lowest/median (ISO 4217), null when no price was known in the window. */
	currency: string | null;
	lowestMinor: number | null;
	/** Time-weighted median price. */
	medianMinor: number | null;
	/** 0..1, or null when no stock state was known in the window. */
	buyableShare: number | null;
	restocks: number;
	/** Median hours a restock lasted before selling out (completed spells ending in the window). */
	typicalRestockHours: number | null;
	completedSpells: number;
	/** Hours of the window covered by history. */
	coveredHours: number;
}

interface Segment {
	start: number;
	end: number;
	point: ChangePoint;
}

/** Segments of `points` (sorted by time) clipped to [from, to]; zero-length ones dropped. */
function segments(points: ChangePoint[], from: number, to: number): Segment[] {
	const out: Segment[] = [];
	for (let i = 0; i < points.length; i++) {
		const start = Math.max(points[i].at.getTime(), from);
		const end = Math.min(i + 1 < points.length ? points[i + 1].at.getTime() : to, to);
		if (end > start) out.push({ start, end, point: points[i] });
	}
	return out;
}

/** Median of numbers (mean of the middle two for an even count); null when empty. */
function median(xs: number[]): number | null {
	if (!xs.length) return null;
	const s = [...xs].sort((a, b) => a - b);
	const m = s.length >> 1;
	return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Restocks and completed buyable spells over the whole history, judged against the last known state. */
function transitions(points: ChangePoint[]): { restocks: number[]; spells: Array<{ start: number; end: number }> } {
	const restocks: number[] = [];
	const spells: Array<{ start: number; end: number }> = [];
	let known: StockState | null = null;
	let spellStart: number | null = null;
	for (const p of points) {
		if (p.stock === 'unknown') continue;
		const t = p.at.getTime();
		if (known && !isBuyable(known) && isBuyable(p.stock)) {
			restocks.push(t);
			spellStart = t;
		} else if (known && isBuyable(known) && !isBuyable(p.stock)) {
			if (spellStart !== null) spells.push({ start: spellStart, end: t });
			spellStart = null;
		}
		known = p.stock;
	}
	return { restocks, spells };
}

/**
 * Figures for one window [from, to] from a listing's change points (sorted by time, any span; points
 * after `to` are ignored). Pure: the definitions are in this module's header.
 */
export function windowFigures(allPoints: ChangePoint[], from: Date, to: Date): WindowFigures {
	const f = from.getTime();
	const t = to.getTime();
	const points = allPoints.filter((p) => p.at.getTime() <= t);
	const segs = segments(points, f, t);
	const priced = segs.filter((s) => s.point.priceMinor != null && s.point.currency);
	const currency = priced.length ? priced[priced.length - 1].point.currency : null;
	const inCurrency = priced.filter((s) => s.point.currency === currency);
	let lowestMinor: number | null = null;
	let medianMinor: number | null = null;
	if (inCurrency.length) {
		lowestMinor = Math.min(...inCurrency.map((s) => s.point.priceMinor!));
		const byPrice = [...inCurrency].sort((a, b) => a.point.priceMinor! - b.point.priceMinor!);
		const total = byPrice.reduce((n, s) => n + (s.end - s.start), 0);
		let acc = 0;
		for (const s of byPrice) {
			acc += s.end - s.start;
			if (acc * 2 >= total) {
				medianMinor = s.point.priceMinor;
				break;
			}
		}
	}
	const knownStock = segs.filter((s) => s.point.stock !== 'unknown');
	const knownMs = knownStock.reduce((n, s) => n + (s.end - s.start), 0);
	const buyableMs = knownStock.filter((s) => isBuyable(s.point.stock)).reduce((n, s) => n + (s.end - s.start), 0);
	const { restocks, spells } = transitions(points);
	const ended = spells.filter((s) => s.end >= f && s.end <= t);
	const typical = median(ended.map((s) => s.end - s.start));
	return {
		from,
		to,
		currency,
		lowestMinor,
		medianMinor,
		buyableShare: knownMs > 0 ? buyableMs / knownMs : null,
		restocks: restocks.filter((r) => r >= f && r <= t).length,
		typicalRestockHours: typical === null ? null : typical / 3_600_000,
		completedSpells: ended.length,
		coveredHours: segs.reduce((n, s) => n + (s.end - s.start), 0) / 3_600_000
	};
}

/**
 * At most `maxPoints` change points for a chart of [from, to], step-preserving: the window is cut into
 * equal time buckets and each keeps its first, cheapest, dearest and last point. Every point kept is a
 * real change point, so a step chart through them shows true levels, every price extreme and the
 * state at each bucket's end; only short-lived states inside a busy bucket can drop out.
 */
export function downsampleSteps(points: ChangePoint[], from: Date, to: Date, maxPoints: number): ChangePoint[] {
	if (points.length <= maxPoints) return points;
	const buckets = Math.max(1, Math.floor(maxPoints / 4));
	const f = from.getTime();
	const width = Math.max(1, (to.getTime() - f) / buckets);
	const keep = new Set<number>();
	let i = 0;
	for (let b = 0; b < buckets && i < points.length; b++) {
		const end = b === buckets - 1 ? Infinity : f + (b + 1) * width;
		const first = i;
		let lo = -1;
		let hi = -1;
		while (i < points.length && points[i].at.getTime() < end) {
			const p = points[i].priceMinor;
			if (p != null && (lo < 0 || p < points[lo].priceMinor!)) lo = i;
			if (p != null && (hi < 0 || p > points[hi].priceMinor!)) hi = i;
			i++;
		}
		if (i === first) continue;
		keep.add(first).add(i - 1);
		if (lo >= 0) keep.add(lo);
		if (hi >= 0) keep.add(hi);
	}
	return [...keep].sort((a, b) => a - b).map((k) => points[k]);
}

export const HISTORY_RANGES = ['30d', '90d', '1y', 'all'] as const;
export type HistoryRange = (typeof HISTORY_RANGES)[number];
const RANGE_DAYS: Record<Exclude<HistoryRange, 'all'>, number> = { '30d': 30, '90d': 90, '1y': 365 };

export interface ListingHistory {
	listing: {
		id: number;
		converterId: number;
		url: string;
		currency: string;
		delistedAt: Date | null;
		shop: { slug: string; name: string; region: Region };
	};
	current: {
		priceMinor: number | null;
		currency: string | null;
		stock: StockState;
		since: Date | null;
		lastCheckedAt: Date | null;
		lastSuccessAt: Date | null;
		lastOutcome: PollOutcome | null;
		consecutiveFailures: number;
	};
	range: { key: HistoryRange; from: Date; to: Date };
	/** Change points for the chart; the first is the state carried in at `from` (carried: true). */
	points: Array<ChangePoint & { carried?: boolean }>;
	/** Change points in the range before downsampling. */
	totalPoints: number;
	downsampled: boolean;
	figures: { d30: WindowFigures; d90: WindowFigures };
}

type PointRow = { at: Date | string; price_minor: number | null; currency: string | null; stock: StockState };
const toPoint = (r: PointRow): ChangePoint => ({
	at: new Date(r.at),
	priceMinor: r.price_minor == null ? null : Number(r.price_minor),
	currency: r.currency,
	stock: r.stock
});

/**
 * The change points windowFigures needs for windows of up to FIGURE_DAYS ending at each listing's
 * `to` (now, or its delisting if that came first), for several listings in one statement: those in
 * [to - FIGURE_DAYS, to] and four from before: the state carried in, the last known stock state,
 * the last known not-buyable state and the restock that followed it (a spell running at the window's
 * start started there). Older points change no figure, so a year of history costs no more rows than
 * the window holds.
 */
async function figurePoints(
	db: Db,
	listingIds: number[],
	now: Date
): Promise<Map<number, { to: Date; points: ChangePoint[] }>> {
	const out = new Map<number, { to: Date; points: ChangePoint[] }>();
	if (!listingIds.length) return out;
	const rows = (await db.execute(sql`
		with w as materialized (
			select l.id, s.upto, s.since, down.id as down,
				(select b.id from observation b where b.listing_id = l.id and b.observed_at < s.since
					order by b.observed_at desc, b.id desc limit 1) as carried,
				(select b.id from observation b where b.listing_id = l.id and b.observed_at < s.since and b.stock <> 'unknown'
					order by b.observed_at desc, b.id desc limit 1) as known,
				(select b.id from observation b where b.listing_id = l.id and b.observed_at < s.since
					and b.stock in ${BUYABLE_STOCK} and b.observed_at >= coalesce(down.observed_at, '-infinity')
					order by b.observed_at, b.id limit 1) as restock
			from listing l
			cross join lateral (select u.upto, u.upto - make_interval(days => ${FIGURE_DAYS}) as since
				from (select least(coalesce(l.delisted_at, ${now.toISOString()}::timestamptz), ${now.toISOString()}::timestamptz) as upto) u) s
			left join lateral (select b.id, b.observed_at from observation b
				where b.listing_id = l.id and b.observed_at < s.since and b.stock not in ${BUYABLE_STOCK} and b.stock <> 'unknown'
				order by b.observed_at desc, b.id desc limit 1) down on true
			where l.id = any(${idArray(listingIds)}::int[]))
		select w.id as listing_id, w.upto, o.observed_at as at, o.price_minor, o.currency, o.stock
		from w left join observation o on o.listing_id = w.id and o.observed_at <= w.upto
			and (o.observed_at >= w.since or o.id in (w.carried, w.known, w.down, w.restock))
		order by w.id, o.observed_at, o.id`)) as unknown as Array<
		Partial<PointRow> & { listing_id: number; upto: Date | string }
	>;
	for (const r of rows) {
		let listing = out.get(r.listing_id);
		if (!listing) out.set(r.listing_id, (listing = { to: new Date(r.upto), points: [] }));
		if (r.at != null) listing.points.push(toPoint(r as PointRow));
	}
	return out;
}

/**
 * The chart's points for [from, to], downsampled in SQL as downsampleSteps does in memory: up to
 * `maxPoints` points as they are; beyond that, equal time buckets (date_bin) each keep their first,
 * cheapest, dearest and last change point. The state carried in from before `from` comes first
 * (at `from`). At most `maxPoints` rows whatever the length of the history.
 */
async function chartPoints(
	db: Db,
	listingId: number,
	from: Date,
	to: Date,
	maxPoints: number
): Promise<{ points: Array<ChangePoint & { carried?: boolean }>; inRange: number; downsampled: boolean }> {
	const [[{ n }], carriedRows] = await Promise.all([
		db.execute(sql`
			select count(*)::int as n from observation
			where listing_id = ${listingId} and observed_at >= ${from.toISOString()}::timestamptz and observed_at <= ${to.toISOString()}::timestamptz`) as unknown as Promise<
			Array<{ n: number }>
		>,
		db.execute(sql`
			select observed_at as at, price_minor, currency, stock from observation
			where listing_id = ${listingId} and observed_at < ${from.toISOString()}::timestamptz
			order by observed_at desc, id desc limit 1`) as unknown as Promise<PointRow[]>
	]);
	const carried = carriedRows.map((r) => ({ ...toPoint(r), at: from, carried: true as const }));
	if (n + carried.length <= maxPoints) {
		const rows = (await db.execute(sql`
			select observed_at as at, price_minor, currency, stock from observation
			where listing_id = ${listingId} and observed_at >= ${from.toISOString()}::timestamptz and observed_at <= ${to.toISOString()}::timestamptz
			order by observed_at, id`)) as unknown as PointRow[];
		return { points: [...carried, ...rows.map(toPoint)], inRange: n, downsampled: false };
	}
	// One slot is the carried point; four per bucket.
	const buckets = Math.max(1, Math.floor((maxPoints - 1) / 4));
	const widthMs = Math.max(1, Math.ceil((to.getTime() - from.getTime()) / buckets));
	const lastBucket = new Date(from.getTime() + (buckets - 1) * widthMs);
	const rows = (await db.execute(sql`
		with pts as (
			select id, observed_at, price_minor, currency, stock,
				least(date_bin(${`${widthMs} milliseconds`}::interval, observed_at, ${from.toISOString()}::timestamptz), ${lastBucket.toISOString()}::timestamptz) as bucket
			from observation
			where listing_id = ${listingId} and observed_at >= ${from.toISOString()}::timestamptz and observed_at <= ${to.toISOString()}::timestamptz
		), ranked as (
			select *,
				row_number() over (partition by bucket order by observed_at, id) as first_n,
				row_number() over (partition by bucket order by observed_at desc, id desc) as last_n,
				row_number() over (partition by bucket order by price_minor asc nulls last, observed_at, id) as low_n,
				row_number() over (partition by bucket order by price_minor desc nulls last, observed_at, id) as high_n
			from pts
		)
		select observed_at as at, price_minor, currency, stock from ranked
		where first_n = 1 or last_n = 1 or (price_minor is not null and (low_n = 1 or high_n = 1))
		order by observed_at, id`)) as unknown as PointRow[];
	return { points: [...carried, ...rows.map(toPoint)], inRange: n, downsampled: rows.length < n };
}

/**
 * One listing's history for a chart plus its 30- and 90-day figures; null when there is no such
 * listing. `points` caps the chart's points (downsampled in SQL, see chartPoints); the figures
 * read only the change points they need (figurePoints), so a long history costs a bounded number
 * of rows.
 */
export async function listingHistory(
	db: Db,
	listingId: number,
	opts: { range?: HistoryRange; points?: number; now?: Date } = {}
): Promise<ListingHistory | null> {
	const now = opts.now ?? new Date();
	const range = opts.range ?? '90d';
	const [row] = await db
		.select({
			listing: listings,
			shop: { slug: shops.slug, name: shops.name, region: shops.region, currency: shops.currency },
			state: listingStates
		})
		.from(listings)
		.innerJoin(shops, eq(shops.id, listings.shopId))
		.leftJoin(listingStates, eq(listingStates.listingId, listings.id))
		.where(eq(listings.id, listingId));
	if (!row) return null;
	// A delisted page's history ends when it went away: no figure runs on past that.
	const to = row.listing.delistedAt && row.listing.delistedAt < now ? row.listing.delistedAt : now;
	let from: Date;
	if (range === 'all') {
		const [first] = (await db.execute(sql`
			select min(observed_at) as at from observation where listing_id = ${listingId}`)) as unknown as Array<{
			at: Date | string | null;
		}>;
		from = first?.at ? new Date(first.at) : to;
		if (from > to) from = to;
	} else from = new Date(to.getTime() - RANGE_DAYS[range] * DAY);
	const maxPoints = Math.min(Math.max(opts.points ?? 300, 10), 1000);
	const [chart, forFigures] = await Promise.all([
		chartPoints(db, listingId, from, to, maxPoints),
		figurePoints(db, [listingId], now).then((w) => w.get(listingId)?.points ?? [])
	]);
	const st = row.state;
	return {
		listing: {
			id: row.listing.id,
			converterId: row.listing.converterId,
			url: row.listing.url,
			currency: row.shop.currency,
			delistedAt: row.listing.delistedAt,
			shop: { slug: row.shop.slug, name: row.shop.name, region: row.shop.region }
		},
		current: {
			priceMinor: st?.currentPriceMinor ?? null,
			currency: st?.currentCurrency ?? null,
			stock: st?.currentStock ?? 'unknown',
			since: st?.currentSince ?? null,
			lastCheckedAt: st?.lastCheckedAt ?? null,
			lastSuccessAt: st?.lastSuccessAt ?? null,
			lastOutcome: st?.lastOutcome ?? null,
			consecutiveFailures: st?.consecutiveFailures ?? 0
		},
		range: { key: range, from, to },
		points: chart.points,
		totalPoints: chart.inRange,
		downsampled: chart.downsampled,
		figures: {
			d30: windowFigures(forFigures, new Date(to.getTime() - 30 * DAY), to),
			d90: windowFigures(forFigures, new Date(to.getTime() - 90 * DAY), to)
		}
	};
}

/** 30- and 90-day figures for many listings at once (the converter page), in one statement. */
export async function listingFigures(
	db: Db,
	listingIds: number[],
	now = new Date()
): Promise<Map<number, { d30: WindowFigures; d90: WindowFigures }>> {
	const windows = await figurePoints(db, listingIds, now);
	const out = new Map<number, { d30: WindowFigures; d90: WindowFigures }>();
	for (const [id, { to, points: pts }] of windows) {
		out.set(id, {
			d30: windowFigures(pts, new Date(to.getTime() - 30 * DAY), to),
			d90: windowFigures(pts, new Date(to.getTime() - FIGURE_DAYS * DAY), to)
		});
	}
	return out;
}

/** The 90-day figures alone for many listings (the converter page shows no others), in one statement. */
export async function listing90DayFigures(
	db: Db,
	listingIds: number[],
	now = new Date()
): Promise<Map<number, WindowFigures>> {
	const windows = await figurePoints(db, listingIds, now);
	const out = new Map<number, WindowFigures>();
	for (const [id, { to, points }] of windows)
		out.set(id, windowFigures(points, new Date(to.getTime() - FIGURE_DAYS * DAY), to));
	return out;
}

/**
 * Per converter, the best buyable offer in every region, priced in the region's currency through the
 * latest exchange rates (bestOfferByConverter over currentOffers). A region without one maps to null.
 */
export async function bestOffersByRegion(
	db: Db,
	converterIds?: number[],
	now = new Date()
): Promise<Map<number, Record<Region, PricedOffer | null>>> {
	const [offers, rates] = await Promise.all([
		currentOffers(db, converterIds),
		loadRates(db, now.toISOString().slice(0, 10))
	]);
	const ids = converterIds ?? [...new Set(offers.map((o) => o.converterId))];
	const out = new Map<number, Record<Region, PricedOffer | null>>(
		ids.map((id) => [id, Object.fromEntries(REGION_CODES.map((r) => [r, null])) as Record<Region, PricedOffer | null>])
	);
	for (const region of REGION_CODES) {
		for (const [converterId, offer] of bestOfferByConverter(offers, region, REGION_CURRENCY[region], rates)) {
			out.get(converterId)![region] = offer;
		}
	}
	return out;
}
