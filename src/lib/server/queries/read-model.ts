/**
 * The public read model: one `converter_card` row per live converter and region holding the
 * catalogue entry priced in the region's currency (lead band and score of the revisions shops
 * send now, the best buyable offer, stock counts, features) plus the indexed columns the
 * catalogue filters and sorts on. Pages and /api/v1 read cards; they never recompute a grade or
 * price the whole catalogue. Converting to the visitor's currency happens per page at read time.
 *
 * Keeping it current: triggers (migration 0006) put the converters whose inputs changed into
 * `card_dirty` (upserting the row, so concurrent writers of one converter queue behind each
 * other) and pg_notify('sg_public', ...) in the writing transaction. The transactions that record
 * a grade, a listing's state change or a new exchange rate call `refreshCards` before they
 * commit; any other writer (a curator's edit) is caught by `refreshDirtyCards`, which every read
 * runs first (one indexed probe when nothing is dirty).
 */
import { and, asc, desc, eq, inArray, isNull, notInArray, sql, type SQL } from 'drizzle-orm';
import { cardDirty, converterCards, converters, listingStates, listings } from '../db/schema';
import { buildEntries, revisionsFor, type Db, type Viewpoint } from './catalogue-entries';
import { currentOffers, loadRates } from './offers';
import { BANDS, bandRank } from '../../components/bands';
import { minorDigits } from '../../feeds/currency';
import { convertMinor, REGION_CODES, REGION_CURRENCY, type RatesPerEur } from '../../pricing';
import {
	rankFinder,
	type CatalogueEntry,
	type CatalogueFilter,
	type CatalogueOffer,
	type CatalogueSort,
	type FinderInput,
	type FinderResult
} from '../../finder';

const BATCH = 400;

/** The best offer's price in EUR, unrounded: linear in every display currency, so it sorts and filters for all. */
function eurOf(o: CatalogueOffer | null, rates: RatesPerEur): number | null {
	if (!o || o.priceMinor == null || !o.currency || !rates[o.currency]) return null;
	return o.priceMinor / 10 ** minorDigits(o.currency) / rates[o.currency];
}

/**
 * Rebuild the cards of some converters (or all) from the catalogue tables, inside the caller's
 * transaction. Retired or deleted converters lose their cards.
 */
export async function rebuildCards(db: Db, ids: number[] | 'all'): Promise<number> {
	if (ids !== 'all' && ids.length === 0) return 0;
	const rows = await db
		.select()
		.from(converters)
		.where(and(isNull(converters.retiredAt), ids === 'all' ? undefined : inArray(converters.id, ids)));
	const live = rows.map((r) => r.id);
	await db
		.delete(converterCards)
		.where(
			and(
				ids === 'all' ? undefined : inArray(converterCards.converterId, ids),
				live.length ? notInArray(converterCards.converterId, live) : undefined
			)
		);
	if (rows.length === 0) return 0;
	const [revs, offers, rates] = await Promise.all([
		revisionsFor(db, ids === 'all' ? 'all' : live),
		currentOffers(db, ids === 'all' ? undefined : live),
		loadRates(db)
	]);
	const now = new Date();
	const values = REGION_CODES.flatMap((region) =>
		buildEntries(rows, revs, offers, { region, currency: REGION_CURRENCY[region] }, rates).map((e) => ({
			region,
			converterId: e.id,
			slug: e.slug,
			brand: e.brand,
			model: e.model,
			hasAudioOut: e.hasAudioOut,
			power: e.power,
			bandRank: bandRank(e.bestBand),
			score: e.bestScore ?? -1,
			bestEur: eurOf(e.best, rates),
			buyable: e.inStockShops > 0 ? 0 : e.best ? 1 : 2,
			inStockShops: e.inStockShops,
			entry: e,
			refreshedAt: now
		}))
	);
	for (let i = 0; i < values.length; i += BATCH) {
		await db
			.insert(converterCards)
			.values(values.slice(i, i + BATCH))
			.onConflictDoUpdate({
				target: [converterCards.region, converterCards.converterId],
				set: Object.fromEntries(
					[
						'slug',
						'brand',
						'model',
						'has_audio_out',
						'power',
						'band_rank',
						'score',
						'best_eur',
						'buyable',
						'in_stock_shops',
						'entry',
						'refreshed_at'
					].map((c) => [c.replace(/_(\w)/g, (_, x: string) => x.toUpperCase()), sql.raw(`excluded.${c}`)])
				)
			});
	}
	return rows.length;
}

/**
 * Writers call this last in the transaction that changed a converter's inputs: it takes the
 * converters' dirty marks (waiting for any other writer of the same converter to commit first)
 * and rebuilds their cards, so the change and the card commit together. 'all' after a new rate.
 */
export async function refreshCards(tx: Db, ids: number[] | 'all'): Promise<void> {
	if (ids === 'all') await tx.delete(cardDirty);
	else if (ids.length)
		await tx.delete(cardDirty).where(
			inArray(
				cardDirty.converterId,
				[...new Set(ids)].sort((a, b) => a - b)
			)
		);
	await rebuildCards(tx, ids === 'all' ? 'all' : [...new Set(ids)]);
}

/** refreshCards for the converters of some listings (the poller knows listings, not converters). */
export async function refreshListingCards(tx: Db, listingIds: number[]): Promise<void> {
	if (!listingIds.length) return;
	const rows = await tx.select({ id: listings.converterId }).from(listings).where(inArray(listings.id, listingIds));
	await refreshCards(
		tx,
		rows.map((r) => r.id)
	);
}

/**
 * Rebuild whatever writers left dirty without rebuilding (curators' edits, the seed). Rows another
 * transaction holds are skipped: that writer is still working and its mark stays for the next read.
 */
export async function refreshDirtyCards(db: Db): Promise<number> {
	const [probe] = await db.select({ id: cardDirty.converterId }).from(cardDirty).limit(1);
	if (!probe) return 0;
	return db.transaction(async (tx) => {
		const taken = (await tx.execute(sql`
			delete from card_dirty where converter_id in (
				select converter_id from card_dirty order by converter_id for update skip locked
			) returning converter_id`)) as unknown as Array<{ converter_id: number }>;
		const ids = taken.map((r) => Number(r.converter_id));
		return rebuildCards(tx, ids);
	});
}

/** An entry as stored (priced in its region's currency) re-priced for the visitor's currency. */
function inCurrency(
	e: CatalogueEntry,
	currency: string,
	rates: RatesPerEur,
	checked: Map<number, string | null>
): CatalogueEntry {
	const price = (o: CatalogueOffer): CatalogueOffer => ({
		...o,
		displayMinor:
			o.displayCurrency === currency
				? o.displayMinor
				: o.priceMinor != null && o.currency
					? convertMinor(o.priceMinor, o.currency, currency, rates)
					: null,
		displayCurrency: currency,
		lastCheckedAt: checked.has(o.listingId) ? checked.get(o.listingId)! : o.lastCheckedAt
	});
	return { ...e, offers: e.offers.map(price), best: e.best ? price(e.best) : null };
}

/** "Last checked" moves on every poll without changing a card: read it fresh for the page's offers. */
async function lastChecked(db: Db, entries: CatalogueEntry[]): Promise<Map<number, string | null>> {
	const ids = [
		...new Set(entries.flatMap((e) => e.offers.map((o) => o.listingId).concat(e.best ? [e.best.listingId] : [])))
	];
	if (!ids.length) return new Map();
	const rows = await db
		.select({ id: listingStates.listingId, at: listingStates.lastCheckedAt })
		.from(listingStates)
		.where(inArray(listingStates.listingId, ids));
	return new Map(rows.map((r) => [r.id, r.at ? r.at.toISOString() : null]));
}

async function hydrate(db: Db, stored: unknown[], view: Viewpoint, rates: RatesPerEur): Promise<CatalogueEntry[]> {
	const entries = stored as CatalogueEntry[];
	const checked = await lastChecked(db, entries);
	return entries.map((e) => inCurrency(e, view.currency, rates, checked));
}

/** ICU root collation: the order of String.localeCompare, whatever the cluster's locale. */
const byName = [sql`${converterCards.brand} collate "und-x-icu"`, sql`${converterCards.model} collate "und-x-icu"`];
const priceNullsLast = sql`${converterCards.bestEur} asc nulls last`;

export type CardOrder = CatalogueSort | 'finder';

/**
 * Rank of a card's expected grade (a prediction for revisions not yet measured, entry.expected),
 * as bandRank ranks it: the position in the one BANDS list, ungraded last. And the rank the band
 * filter and sort use when the visitor includes expected grades: the better of measured and
 * expected.
 */
const bandOrder = sql`array[${sql.join(
	BANDS.map((b) => sql`${b}`),
	sql`, `
)}]::text[]`;
const expectedRank = sql`coalesce(array_position(${bandOrder}, ${converterCards.entry} #>> '{expected,band}') - 1, ${sql.raw(String(bandRank(null)))})`;
const rankWith = (includeExpected: boolean | undefined) =>
	includeExpected ? sql`least(${converterCards.bandRank}, ${expectedRank})` : sql`${converterCards.bandRank}`;

function orderFor(sort: CardOrder, includeExpected?: boolean): SQL[] {
	// at the same band a measured grade goes before an expected one
	const band = includeExpected
		? [asc(rankWith(true)), asc(converterCards.bandRank), desc(converterCards.score)]
		: [asc(converterCards.bandRank), desc(converterCards.score)];
	switch (sort) {
		case 'name':
			return byName;
		case 'price':
			return [priceNullsLast, ...band, ...byName];
		case 'finder':
			return [
				...(includeExpected ? [asc(rankWith(true))] : []),
				asc(converterCards.bandRank),
				asc(converterCards.buyable),
				desc(converterCards.score),
				priceNullsLast,
				...byName
			];
		default:
			return [...band, priceNullsLast, ...byName];
	}
}

/** The SQL of a catalogue filter; prices compare as the visitor sees them (convertMinor's rounding). */
function whereFor(view: Viewpoint, f: CatalogueFilter, rates: RatesPerEur): SQL {
	const parts: (SQL | undefined)[] = [eq(converterCards.region, view.region)];
	if (f.minBand) parts.push(sql`${rankWith(f.includeExpected)} <= ${bandRank(f.minBand)}`);
	if (f.audio) parts.push(eq(converterCards.hasAudioOut, true));
	if (f.power) parts.push(eq(converterCards.power, f.power));
	if (f.inStock) parts.push(sql`${converterCards.inStockShops} > 0`);
	if (f.priceMin != null || f.priceMax != null) {
		const rate = rates[view.currency];
		if (!rate) parts.push(sql`false`);
		else {
			const shown = sql`round(${converterCards.bestEur} * ${rate}::float8 * ${10 ** minorDigits(view.currency)}::float8)`;
			if (f.priceMin != null) parts.push(sql`${shown} >= ${f.priceMin}`);
			if (f.priceMax != null) parts.push(sql`${shown} <= ${f.priceMax}`);
		}
	}
	return and(...parts)!;
}

export interface CataloguePage {
	entries: CatalogueEntry[];
	/** Live converters in the catalogue. */
	total: number;
	/** Converters matching the filter. */
	matching: number;
	page: number;
	pages: number;
	pageSize: number;
}

/**
 * One page of the catalogue for a viewpoint: filter, order and page in SQL over the region's
 * cards (four statements whatever the catalogue's size: dirty probe, rates, counts + page, last checked).
 */
export async function loadCataloguePage(
	db: Db,
	view: Viewpoint,
	filter: CatalogueFilter & { order?: CardOrder },
	opts: { page?: number; pageSize: number }
): Promise<CataloguePage> {
	await refreshDirtyCards(db);
	const rates = await loadRates(db);
	const where = whereFor(view, filter, rates);
	const [counts] = await db
		.select({
			total: sql<number>`count(*)::int`,
			matching: sql<number>`(count(*) filter (where ${where}))::int`
		})
		.from(converterCards)
		.where(eq(converterCards.region, view.region));
	const pages = Math.max(1, Math.ceil(counts.matching / opts.pageSize));
	const page = Math.min(Math.max(1, opts.page ?? 1), pages);
	const rows = counts.matching
		? await db
				.select({ entry: converterCards.entry })
				.from(converterCards)
				.where(where)
				.orderBy(...orderFor(filter.order ?? filter.sort ?? 'band', filter.includeExpected))
				.limit(opts.pageSize)
				.offset((page - 1) * opts.pageSize)
		: [];
	return {
		entries: await hydrate(
			db,
			rows.map((r) => r.entry),
			view,
			rates
		),
		total: counts.total,
		matching: counts.matching,
		page,
		pages,
		pageSize: opts.pageSize
	};
}

/** Some converters' entries for a viewpoint, in the order asked (missing or retired ones left out). */
export async function loadEntries(db: Db, view: Viewpoint, ids: number[]): Promise<CatalogueEntry[]> {
	if (!ids.length) return [];
	await refreshDirtyCards(db);
	const [rows, rates] = await Promise.all([
		db
			.select({ id: converterCards.converterId, entry: converterCards.entry })
			.from(converterCards)
			.where(and(eq(converterCards.region, view.region), inArray(converterCards.converterId, ids))),
		loadRates(db)
	]);
	const byId = new Map(rows.map((r) => [r.id, r.entry]));
	return hydrate(
		db,
		ids.filter((id) => byId.has(id)).map((id) => byId.get(id)),
		view,
		rates
	);
}

/** Finder results shown at most: the best matches of a catalogue of thousands, ranked. */
export const FINDER_LIMIT = 100;

/**
 * The finder: filters and the ranking order (band, buyable now, score, price, name) in SQL, then
 * the pure rankFinder explains the top FINDER_LIMIT matches in words.
 */
export async function loadFinder(db: Db, view: Viewpoint, input: FinderInput): Promise<FinderResult[]> {
	const { entries } = await loadCataloguePage(
		db,
		view,
		{
			order: 'finder',
			minBand: input.minBand,
			audio: input.needsAudio,
			inStock: input.inStockNow,
			priceMax: input.budgetMinor,
			includeExpected: input.includeExpected
		},
		{ pageSize: FINDER_LIMIT }
	);
	return rankFinder(entries, input);
}

/** Slug and name of every live converter (pickers), from the cards of one region. */
export async function listConverterNames(
	db: Db
): Promise<Array<{ id: number; slug: string; brand: string; model: string }>> {
	await refreshDirtyCards(db);
	return db
		.select({
			id: converterCards.converterId,
			slug: converterCards.slug,
			brand: converterCards.brand,
			model: converterCards.model
		})
		.from(converterCards)
		.where(eq(converterCards.region, REGION_CODES[0]))
		.orderBy(...byName);
}
