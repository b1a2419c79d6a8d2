/**
 * Shops as buyers and curators see them, and restock outlooks per listing.
 *
 * - `shopHealth`: the poller's health per shop over a window of UTC days (today included): outcome
 *   counts from poll_count, share of failed polls, the last error, a pause, listings failing now.
 *   The ONE definition of a shop's failed-poll share: the curator listings page, the curator health
 *   API and the public shop record all read it from here.
 * - `shopRecords`: the public shop record over the last RECORD_DAYS days (figures defined on
 *   ShopRecord) and its one-line summary; `refreshShopRecords` stores every shop's line for the
 *   listing rows of converter pages and the listings API (`listingNotes`).
 * - `listingOutlooks`: the restock outlook ($lib/restock) of listings from their own change points.
 */
import { and, asc, desc, eq, gte, inArray, isNull, lte, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { idArray, inIdList, preparedFor } from '../db/prepared';
import {
	listingStates,
	listings,
	observations,
	pollCounts,
	shopPollStates,
	shopRecordRows,
	shops,
	type PollOutcome,
	type StockState
} from '../db/schema';
import { BUYABLE_STOCK, isBuyable, type Region } from '../../pricing';
import {
	kaplanMeier,
	MIN_OUTLOOK_SPELLS,
	listingSpells,
	restockOutlook,
	type RestockOutlook,
	type Spell,
	type StockPoint
} from '../../restock';
import { shopRecordLine } from '../../shop-record';

const DAY = 86_400_000;

/** Outcomes that count as a failed poll (ok and not_modified are the successes). */
export const FAILURE_OUTCOMES = new Set<PollOutcome>([
	'timeout',
	'network',
	'http_4xx',
	'http_5xx',
	'rate_limited',
	'robots_disallowed',
	'gone',
	'unreadable',
	'wrong_currency',
	'too_large'
]);

export interface ShopHealth {
	shop: { id: number; slug: string; name: string; active: boolean };
	/** Poll outcomes counted per outcome over the window (poll_count days). */
	counts: Partial<Record<PollOutcome, number>>;
	polls: number;
	failures: number;
	/** failures / polls, null with no polls. */
	failureShare: number | null;
	lastPollAt: Date | null;
	lastError: { outcome: PollOutcome; at: Date; detail: string | null } | null;
	pausedUntil: Date | null;
	pauseReason: string | null;
	/** Active listings of the shop (not delisted). */
	activeListings: number;
	/** Active listings whose latest poll failed, worst first. */
	failingNow: Array<{
		listingId: number;
		url: string;
		lastOutcome: PollOutcome | null;
		lastError: string | null;
		lastErrorAt: Date | null;
		consecutiveFailures: number;
		nextPollAt: Date;
	}>;
}

/** The UTC days [from, to] of a window of `days` days ending today. */
export function healthWindow(now: Date, days: number): { from: string; to: string } {
	return {
		to: now.toISOString().slice(0, 10),
		from: new Date(now.getTime() - (days - 1) * DAY).toISOString().slice(0, 10)
	};
}

/** The poller's health per shop over the last `days` UTC days (today included). */
export async function shopHealth(
	db: Db,
	opts: { now?: Date; days?: number; shopIds?: number[] } = {}
): Promise<{ from: string; to: string; shops: ShopHealth[] }> {
	const now = opts.now ?? new Date();
	const { from, to } = healthWindow(now, opts.days ?? 7);
	const onlyShops = opts.shopIds ? inArray(shops.id, opts.shopIds.length ? opts.shopIds : [-1]) : undefined;
	const [shopRows, counts, failing, pauses, active] = await Promise.all([
		db
			.select({ id: shops.id, slug: shops.slug, name: shops.name, active: shops.active })
			.from(shops)
			.where(onlyShops)
			.orderBy(asc(shops.name)),
		db
			.select({
				shopId: pollCounts.shopId,
				outcome: pollCounts.outcome,
				count: pollCounts.count,
				lastAt: pollCounts.lastAt,
				lastDetail: pollCounts.lastDetail
			})
			.from(pollCounts)
			.where(and(gte(pollCounts.day, from), lte(pollCounts.day, to))),
		db
			.select({
				shopId: listings.shopId,
				listingId: listings.id,
				url: listings.url,
				lastOutcome: listingStates.lastOutcome,
				lastError: listingStates.lastError,
				lastErrorAt: listingStates.lastErrorAt,
				consecutiveFailures: listingStates.consecutiveFailures,
				nextPollAt: listingStates.nextPollAt
			})
			.from(listingStates)
			.innerJoin(listings, eq(listings.id, listingStates.listingId))
			.where(and(sql`${listingStates.consecutiveFailures} > 0`, eq(listings.active, true), isNull(listings.delistedAt)))
			.orderBy(desc(listingStates.consecutiveFailures), asc(listings.id)),
		db.select().from(shopPollStates),
		db
			.select({ shopId: listings.shopId, n: sql<number>`count(*)::int` })
			.from(listings)
			.where(and(eq(listings.active, true), isNull(listings.delistedAt)))
			.groupBy(listings.shopId)
	]);
	return {
		from,
		to,
		shops: shopRows.map((shop) => {
			const mine = counts.filter((c) => c.shopId === shop.id);
			const byOutcome: Partial<Record<PollOutcome, number>> = {};
			for (const c of mine) byOutcome[c.outcome] = (byOutcome[c.outcome] ?? 0) + c.count;
			const polls = mine.reduce((n, c) => n + c.count, 0);
			const failed = mine.filter((c) => FAILURE_OUTCOMES.has(c.outcome));
			const failures = failed.reduce((n, c) => n + c.count, 0);
			const lastFailure = [...failed].sort((a, b) => +b.lastAt - +a.lastAt)[0];
			const pause = pauses.find((p) => p.shopId === shop.id);
			const paused = !!pause?.pausedUntil && pause.pausedUntil > now;
			return {
				shop,
				counts: byOutcome,
				polls,
				failures,
				failureShare: polls ? failures / polls : null,
				lastPollAt: mine.length ? new Date(Math.max(...mine.map((c) => +c.lastAt))) : null,
				lastError: lastFailure
					? { outcome: lastFailure.outcome, at: lastFailure.lastAt, detail: lastFailure.lastDetail }
					: null,
				pausedUntil: paused ? pause!.pausedUntil : null,
				pauseReason: paused ? pause!.pauseReason : null,
				activeListings: Number(active.find((a) => a.shopId === shop.id)?.n ?? 0),
				failingNow: failing.filter((f) => f.shopId === shop.id).map(({ shopId: _s, ...f }) => f)
			};
		})
	};
}

/** The window of the public shop record. */
export const RECORD_DAYS = 90;

export interface ShopRecord {
	shop: { id: number; slug: string; name: string; region: Region; currency: string; baseUrl: string };
	from: Date;
	to: Date;
	/** Failed polls over all polls in the window (shopHealth's definition), null with no polls. */
	failedPollShare: number | null;
	polls: number;
	/** Listings the shop removed (delisted) in the window. */
	delistings: number;
	/** Listings tracked at some point of the window (the base for "per listing-month"). */
	listings: number;
	/** Price changes (change points whose price differs from the one before) per listing-month tracked. */
	priceChangesPerListingMonth: number | null;
	/** Kaplan-Meier median of sold-out spells of all its listings until a restock; null under MIN_OUTLOOK_SPELLS. */
	medianRestockGapMs: number | null;
	/** Finished sold-out spells behind that median. */
	restockSpells: number;
	/** Buyable time over time with a known stock state, all listings together. */
	inStockShare: number | null;
	/** The short line shown on listing rows ("usually restocks within 2 weeks; delists rarely"). */
	line: string | null;
}

interface ListingRow {
	id: number;
	shopId: number;
	createdAt: Date;
	delistedAt: Date | null;
}

async function loadStockPoints(
	db: Db,
	listingIds: number[]
): Promise<Map<number, Array<StockPoint & { priceMinor: number | null; currency: string | null }>>> {
	const out = new Map<number, Array<StockPoint & { priceMinor: number | null; currency: string | null }>>(
		listingIds.map((id) => [id, []])
	);
	if (!listingIds.length) return out;
	const rows = await db
		.select({
			listingId: observations.listingId,
			at: observations.observedAt,
			stock: observations.stock,
			priceMinor: observations.priceMinor,
			currency: observations.currency
		})
		.from(observations)
		.where(inArray(observations.listingId, listingIds))
		.orderBy(asc(observations.listingId), asc(observations.observedAt), asc(observations.id));
	for (const { listingId, ...p } of rows) out.get(listingId)!.push(p);
	return out;
}

/**
 * Each listing's stock turns up to its end (now, or its delisting if that came first): every known
 * reading whose buyable-or-not differs from the known one before it, the first one included. These
 * are the spell boundaries listingSpells reads ('unknown' readings and price changes do not end a
 * spell), so it finds the same spells as in the whole history, from a fraction of the rows.
 */
async function loadStockTurns(
	db: Db,
	listingIds: number[],
	now: Date
): Promise<Map<number, { end: Date; points: StockPoint[] }>> {
	const rows = (await db.execute(sql`
		with l as (
			select id, least(coalesce(delisted_at, ${now.toISOString()}::timestamptz), ${now.toISOString()}::timestamptz) as upto
			from listing where id = any(${idArray(listingIds)}::int[])
		),
		known as (
			select o.id, o.listing_id, o.observed_at, o.stock, o.stock in ${BUYABLE_STOCK} as buyable,
				lag(o.stock in ${BUYABLE_STOCK}) over (partition by o.listing_id order by o.observed_at, o.id) as buyable_before
			from l join observation o on o.listing_id = l.id and o.observed_at <= l.upto and o.stock <> 'unknown'
		)
		select l.id as listing_id, l.upto, k.observed_at, k.stock
		from l left join known k on k.listing_id = l.id and k.buyable_before is distinct from k.buyable
		order by l.id, k.observed_at, k.id`)) as unknown as Array<{
		listing_id: number;
		upto: string | Date;
		observed_at: string | Date | null;
		stock: StockState | null;
	}>;
	const out = new Map<number, { end: Date; points: StockPoint[] }>();
	for (const r of rows) {
		const id = Number(r.listing_id);
		let listing = out.get(id);
		if (!listing) out.set(id, (listing = { end: new Date(r.upto), points: [] }));
		if (r.observed_at != null && r.stock) listing.points.push({ at: new Date(r.observed_at), stock: r.stock });
	}
	return out;
}

/** Restock outlooks of listings; a delisted listing's history ends at its delisting. One statement. */
export async function listingOutlooks(
	db: Db,
	listingIds: number[],
	now = new Date()
): Promise<Map<number, RestockOutlook>> {
	if (!listingIds.length) return new Map();
	const turns = await loadStockTurns(db, listingIds, now);
	return new Map(
		listingIds.map((id) => {
			const t = turns.get(id);
			return [id, restockOutlook(t?.points ?? [], t?.end ?? now)];
		})
	);
}

/** Shop records for the given shops (all shops when omitted), keyed by shop id. */
export async function shopRecords(
	db: Db,
	opts: { shopIds?: number[]; now?: Date } = {}
): Promise<Map<number, ShopRecord>> {
	const now = opts.now ?? new Date();
	const to = now.getTime();
	const from = to - RECORD_DAYS * DAY;
	const only = opts.shopIds ? inArray(shops.id, opts.shopIds.length ? opts.shopIds : [-1]) : undefined;
	const shopRows = await db
		.select({
			id: shops.id,
			slug: shops.slug,
			name: shops.name,
			region: shops.region,
			currency: shops.currency,
			baseUrl: shops.baseUrl
		})
		.from(shops)
		.where(only);
	const ids = shopRows.map((s) => s.id);
	const [health, listingRows] = await Promise.all([
		shopHealth(db, { now, days: RECORD_DAYS, shopIds: ids }),
		ids.length
			? db
					.select({
						id: listings.id,
						shopId: listings.shopId,
						createdAt: listings.createdAt,
						delistedAt: listings.delistedAt
					})
					.from(listings)
					.where(and(inArray(listings.shopId, ids), eq(listings.active, true)))
			: Promise.resolve([] as ListingRow[])
	]);
	const points = await loadStockPoints(
		db,
		listingRows.map((l) => l.id)
	);
	const out = new Map<number, ShopRecord>();
	for (const shop of shopRows) {
		const mine = listingRows.filter((l) => l.shopId === shop.id);
		const h = health.shops.find((x) => x.shop.id === shop.id);
		let trackedMs = 0;
		let priceChanges = 0;
		let knownMs = 0;
		let buyableMs = 0;
		let tracked = 0;
		const outSpells: Spell[] = [];
		for (const l of mine) {
			const pts = points.get(l.id) ?? [];
			const end = Math.min(to, l.delistedAt?.getTime() ?? to);
			const start = Math.max(from, pts[0]?.at.getTime() ?? l.createdAt.getTime());
			if (end > start) {
				trackedMs += end - start;
				tracked++;
			}
			for (let i = 0; i < pts.length; i++) {
				const t = pts[i].at.getTime();
				if (
					i > 0 &&
					t >= from &&
					t <= end &&
					pts[i].priceMinor != null &&
					pts[i - 1].priceMinor != null &&
					(pts[i].priceMinor !== pts[i - 1].priceMinor || pts[i].currency !== pts[i - 1].currency)
				)
					priceChanges++;
				const segStart = Math.max(t, from);
				const segEnd = Math.min(i + 1 < pts.length ? pts[i + 1].at.getTime() : end, end);
				if (segEnd > segStart && pts[i].stock !== 'unknown') {
					knownMs += segEnd - segStart;
					if (isBuyable(pts[i].stock as StockState)) buyableMs += segEnd - segStart;
				}
			}
			// Sold-out spells that ended in the window, or are running at its end (censored).
			for (const s of listingSpells(pts, new Date(end)).out) if (s.end! >= from) outSpells.push(s);
		}
		const km = kaplanMeier(outSpells);
		const delistings = mine.filter(
			(l) => l.delistedAt && l.delistedAt.getTime() >= from && l.delistedAt.getTime() <= to
		).length;
		const record: ShopRecord = {
			shop,
			from: new Date(from),
			to: now,
			failedPollShare: h?.failureShare ?? null,
			polls: h?.polls ?? 0,
			delistings,
			listings: tracked,
			priceChangesPerListingMonth: trackedMs > 0 ? priceChanges / (trackedMs / (30 * DAY)) : null,
			medianRestockGapMs: km.events >= MIN_OUTLOOK_SPELLS ? km.median : null,
			restockSpells: km.events,
			inStockShare: knownMs > 0 ? buyableMs / knownMs : null,
			line: null
		};
		record.line = shopRecordLine(record);
		out.set(shop.id, record);
	}
	return out;
}

export interface ListingNote {
	outlook: RestockOutlook;
	/** The listing's shop: where its record lives and its one-line summary. */
	shop: { slug: string; line: string | null };
}

/**
 * Work out every shop's record again and store its line (shop_record), one shop at a time so a
 * large catalogue never holds more than one shop's history. The jobs process runs this on a
 * schedule; the seed runs it once. Pages that changed line are told through sg_public.
 */
export async function refreshShopRecords(db: Db, now = new Date()): Promise<{ shops: number; changed: number }> {
	const all = await db
		.select({ id: shops.id, line: shopRecordRows.line, stored: shopRecordRows.shopId })
		.from(shops)
		.leftJoin(shopRecordRows, eq(shopRecordRows.shopId, shops.id));
	let changed = 0;
	for (const shop of all) {
		const line = (await shopRecords(db, { shopIds: [shop.id], now })).get(shop.id)?.line ?? null;
		await db
			.insert(shopRecordRows)
			.values({ shopId: shop.id, line, computedAt: now })
			.onConflictDoUpdate({ target: shopRecordRows.shopId, set: { line, computedAt: now } });
		if (shop.stored == null || shop.line !== line) changed++;
	}
	if (changed) await db.execute(sql`select pg_notify('sg_public', 'shop_record')`);
	return { shops: all.length, changed };
}

export interface ListingNote {
	outlook: RestockOutlook;
	/** The listing's shop: where its record lives and its one-line summary (as last stored). */
	shop: { slug: string; line: string | null };
}

/** What a listing row shows beside price and stock: its restock outlook and its shop's record line. */
export async function listingNotes(db: Db, listingIds: number[], now = new Date()): Promise<Map<number, ListingNote>> {
	if (!listingIds.length) return new Map();
	const [rows, outlooks] = await Promise.all([
		preparedFor(db, 'listing_shop_lines', () =>
			db
				.select({ id: listings.id, shopSlug: shops.slug, line: shopRecordRows.line })
				.from(listings)
				.innerJoin(shops, eq(shops.id, listings.shopId))
				.leftJoin(shopRecordRows, eq(shopRecordRows.shopId, listings.shopId))
				.where(inIdList(listings.id, 'ids'))
				.prepare('listing_shop_lines')
		).execute({ ids: idArray(listingIds) }),
		listingOutlooks(db, listingIds, now)
	]);
	return new Map(rows.map((r) => [r.id, { outlook: outlooks.get(r.id)!, shop: { slug: r.shopSlug, line: r.line } }]));
}
