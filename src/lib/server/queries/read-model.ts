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
 * commit; any other writer (a curator's edit) is caught by `refreshDirtyCards`, which a read runs
 * when its own statement found a dirty card (`readCards`), then reads again.
 */
import { randomUUID } from 'node:crypto';
import { and, asc, eq, inArray, isNull, notInArray, sql, type SQL } from 'drizzle-orm';
import { cardDirty, converterCards, converters, listings, regionCardCounts } from '../db/schema';
import { buildEntries, revisionsFor, type Db, type Viewpoint } from './catalogue-entries';
import { currentOffers, loadRates, rateDay, ratesSql } from './offers';
import { idArray } from '../db/prepared';
import { apiConverter } from './public-api';
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
			apiItem: apiItemText(e),
			apiShape: API_ITEM_SHAPE,
			bestListingId: e.best?.listingId ?? null,
			// the card's HTML is rendered by the app when a page first shows the rebuilt card
			cardHtml: null,
			cardHtmlBuild: null,
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
						'api_item',
						'api_shape',
						'best_listing_id',
						'card_html',
						'card_html_build',
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

/**
 * Version of the stored API items: bump it when apiConverter's output changes, with a migration
 * that marks every card dirty (as 0014 does). Cards built by older code are listed from their
 * `entry` (as in any currency but the region's) until rebuilt.
 */
export const API_ITEM_SHAPE = 1;

/**
 * Brackets the best offer's last-checked time in a stored API item: it moves on every poll without
 * changing the card, so the list puts in the fresh time on read (`withChecked`). JSON.stringify
 * escapes every control character, so this one never occurs in an item but as the bracket.
 */
const CHECKED_MARK = '\u0001';

/** A card's /api/v1/converters item as JSON text, its best offer's last-checked time bracketed. */
export function apiItemText(e: CatalogueEntry): string {
	const item = apiConverter(e);
	if (!item.bestOffer) return JSON.stringify(item);
	// a token no stored text can contain stands in for the time, then gives way to the bracketed JSON
	const token = randomUUID();
	const text = JSON.stringify({ ...item, bestOffer: { ...item.bestOffer, lastCheckedAt: token } });
	const stored = JSON.stringify(item.bestOffer.lastCheckedAt);
	return text.replace(`"${token}"`, () => CHECKED_MARK + stored + CHECKED_MARK);
}

/** A stored item with the best offer's fresh last-checked time (epoch ms), or the stored one when none was read. */
function withChecked(text: string, checkedMs: number | null): string {
	const open = text.indexOf(CHECKED_MARK);
	if (open < 0) return text;
	const close = text.indexOf(CHECKED_MARK, open + 1);
	if (close < 0) return text;
	const time = checkedMs == null ? text.slice(open + 1, close) : `"${new Date(checkedMs).toISOString()}"`;
	return text.slice(0, open) + time + text.slice(close + 1);
}

/** An entry as stored (priced in its region's currency) re-priced for the visitor's currency. */
export function inCurrency(
	e: CatalogueEntry,
	currency: string,
	rates: RatesPerEur,
	checkedAt: string | null
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
		lastCheckedAt: checkedAt ?? o.lastCheckedAt
	});
	return { ...e, best: e.best ? price(e.best) : null };
}

/** One display currency's rate per EUR in SQL (null when there is none). */
const rateOf = (currency: string, day: string): SQL => sql`(${ratesSql(day)} ->> ${currency})::float8`;

/**
 * "Last checked" moves on every poll without changing a card: read fresh for the best offer of
 * each card a statement returns, joined per row (`card`: the alias of a relation with the card's
 * `best_listing_id`), as epoch milliseconds (a float8, so the driver hands it over as a number).
 */
const checkedJoin = (card: SQL) => sql`left join listing_state ls on ls.listing_id = ${card}.best_listing_id`;
const checkedMs = sql`floor(extract(epoch from ls.last_checked_at) * 1000)::float8`;

interface CardRow {
	/** Whether any card waits for a rebuild, and today's rates: on the statement's first row only (null on the others). */
	dirty: boolean | null;
	rates: RatesPerEur | null;
	entry: CatalogueEntry | null;
	/** The best offer's last-checked time (epoch ms), or null when not read. */
	checked_ms: number | null;
}

/**
 * Run a card read (one statement that also says, on its first row, whether any card is dirty and
 * today's rates: the same on every row, so not parsed 48 times);
 * when some card was dirty, rebuild what writers left and read again, so a read never shows a
 * card older than a committed change.
 */
async function readCards<T extends CardRow>(db: Db, read: () => Promise<T[]>): Promise<T[]> {
	const rows = await read();
	if (!rows[0]?.dirty) return rows;
	await refreshDirtyCards(db);
	return read();
}

/** Entries in the viewpoint's currency, priced with the rates the statement's first row carried. */
function hydrate(rows: CardRow[], view: Viewpoint, rates: RatesPerEur): CatalogueEntry[] {
	return rows.flatMap((r) =>
		r.entry
			? [inCurrency(r.entry, view.currency, rates, r.checked_ms == null ? null : new Date(r.checked_ms).toISOString())]
			: []
	);
}

/** Whether any card waits for a rebuild (a read that finds one runs refreshDirtyCards and reads again). */
export const dirtySql = sql<boolean>`exists (select 1 from card_dirty)`;

/**
 * A value the same for every row of a catalogue page (the dirty probe, the rates), sent on the
 * first row only (the page's card 1, or the one row of an empty page): 47 fewer copies to send
 * and parse.
 */
const onFirstRow = (value: SQL) => sql`case when page.n is null or page.n = 1 then ${value} end`;

/** ICU root collation: the order of String.localeCompare, whatever the cluster's locale. */
const byName = [sql`${converterCards.brand} collate "und-x-icu"`, sql`${converterCards.model} collate "und-x-icu"`];
const priceNullsLast = sql`${converterCards.bestEur} asc nulls last`;

/**
 * Score, highest first, in the order of converter_card_band_idx (`score DESC NULLS LAST`; a card
 * without a score stores -1, never null). A plain `desc` sorts nulls first, which the index does
 * not match: each page then read every card of the region's best band to sort them.
 */
const scoreDesc = sql`${converterCards.score} desc nulls last`;

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
		? [asc(rankWith(true)), asc(converterCards.bandRank), scoreDesc]
		: [asc(converterCards.bandRank), scoreDesc];
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
				scoreDesc,
				priceNullsLast,
				...byName
			];
		default:
			return [...band, priceNullsLast, ...byName];
	}
}

/**
 * The SQL of a catalogue filter over the region's cards, and whether it narrows them at all;
 * prices compare as the visitor sees them (convertMinor's rounding).
 */
function whereFor(view: Viewpoint, f: CatalogueFilter, day: string): { where: SQL; narrowed: boolean } {
	const parts: SQL[] = [];
	if (f.minBand) parts.push(sql`${rankWith(f.includeExpected)} <= ${bandRank(f.minBand)}`);
	if (f.audio) parts.push(eq(converterCards.hasAudioOut, true));
	if (f.power) parts.push(eq(converterCards.power, f.power));
	if (f.inStock) parts.push(sql`${converterCards.inStockShops} > 0`);
	if (f.priceMin != null || f.priceMax != null) {
		// no rate for the currency: the product is null and nothing matches
		const shown = sql`round(${converterCards.bestEur} * ${rateOf(view.currency, day)} * ${10 ** minorDigits(view.currency)}::float8)`;
		if (f.priceMin != null) parts.push(sql`${shown} >= ${f.priceMin}`);
		if (f.priceMax != null) parts.push(sql`${shown} <= ${f.priceMax}`);
	}
	return { where: and(eq(converterCards.region, view.region), ...parts)!, narrowed: parts.length > 0 };
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
 * cards, in one statement whatever the catalogue's size (counts, the page's cards, their best offers'
 * last-checked times, the rates and the dirty probe); a page past the last one shows the last.
 */
export async function loadCataloguePage(
	db: Db,
	view: Viewpoint,
	filter: CatalogueFilter & { order?: CardOrder },
	opts: {
		page?: number;
		pageSize: number;
		/** false: best offers keep the last-checked time of the card's build (pages that do not show it skip the read). */
		lastChecked?: boolean;
	}
): Promise<CataloguePage> {
	const { rows, rates, ...counts } = await readCataloguePage(
		db,
		view,
		filter,
		opts,
		sql`${converterCards.entry} as entry`
	);
	return { entries: hydrate(rows, view, rates), ...counts };
}

/**
 * A page of /api/v1/converters items as JSON texts, in the order of loadCataloguePage (its
 * entries through apiConverter, JSON.stringify'd). In the region's own currency the stored items
 * are sent as they are, with fresh last-checked times; in another currency, or for a card built
 * by code of another API_ITEM_SHAPE, the item is built from the entry.
 */
export async function loadApiCataloguePage(
	db: Db,
	view: Viewpoint,
	filter: CatalogueFilter & { order?: CardOrder },
	opts: { page?: number; pageSize: number }
): Promise<Omit<CataloguePage, 'entries'> & { items: string[] }> {
	const stored =
		view.currency === REGION_CURRENCY[view.region]
			? sql`${converterCards.apiShape} = ${API_ITEM_SHAPE}::smallint`
			: sql`false`;
	const { rows, rates, ...counts } = await readCataloguePage<{ api_item: string | null }>(
		db,
		view,
		filter,
		opts,
		sql`case when ${stored} then ${converterCards.apiItem} end as api_item,
			case when ${stored} then null else ${converterCards.entry} end as entry`
	);
	const items = rows.flatMap((r) =>
		r.api_item != null
			? [withChecked(r.api_item, r.checked_ms)]
			: hydrate([r], view, rates).map((e) => JSON.stringify(apiConverter(e)))
	);
	return { items, ...counts };
}

/** How the catalogue's cards become HTML: the running app build and its renderer (server/rendered-html.ts). */
export interface CardRenderer {
	/** The app build (SvelteKit's `version`); null stores nothing (dev, where components change under a running server). */
	build: string | null;
	render: (entry: CatalogueEntry) => string;
}

/**
 * A page of the catalogue as card HTML, in the order of loadCataloguePage. In the region's own
 * currency a card's stored HTML is sent when this build rendered it; any other card is rendered
 * from its entry and, in the region's currency, stored for the next page that shows it
 * (`storeCardHtml`).
 */
export async function loadCatalogueHtmlPage(
	db: Db,
	view: Viewpoint,
	filter: CatalogueFilter & { order?: CardOrder },
	opts: { page?: number; pageSize: number },
	renderer: CardRenderer
): Promise<Omit<CataloguePage, 'entries'> & { cards: string[] }> {
	const build = view.currency === REGION_CURRENCY[view.region] ? renderer.build : null;
	const stored =
		build == null
			? sql`false`
			: sql`${converterCards.cardHtmlBuild} = ${build} and ${converterCards.cardHtml} is not null`;
	const { rows, rates, ...counts } = await readCataloguePage<{ card_html: string | null; card_xmin: string }>(
		db,
		view,
		filter,
		{ ...opts, lastChecked: false },
		sql`case when ${stored} then ${converterCards.cardHtml} end as card_html,
			case when ${stored} then null else ${converterCards.entry} end as entry,
			${converterCards}.xmin::text as card_xmin`
	);
	const rendered: RenderedCard[] = [];
	const cards = rows.flatMap((r) => {
		if (r.card_html != null) return [r.card_html];
		return hydrate([r], view, rates).map((entry) => {
			const html = renderer.render(entry);
			rendered.push({ id: entry.id, seen: r.card_xmin, html });
			return html;
		});
	});
	if (build != null && rendered.length) await storeCardHtml(db, view.region, build, rendered);
	return { cards, ...counts };
}

/** A card rendered from its entry, and the version of its row (xmin) that entry was read from. */
export interface RenderedCard {
	id: number;
	seen: string;
	html: string;
}

/**
 * Keep rendered cards' HTML with their rows, best effort: a row that changed since it was read (a
 * rebuild wrote a new version, so its xmin moved) keeps its null, and a row another transaction
 * holds is skipped rather than waited for. A failure costs the next page a render, never this one.
 */
export async function storeCardHtml(db: Db, region: Viewpoint['region'], build: string, cards: RenderedCard[]) {
	try {
		await db.execute(sql`
			with v as (select * from json_to_recordset(${JSON.stringify(cards)}::json) as v(id int, seen text, html text)),
			locked as (select c.converter_id, v.html from ${converterCards} c join v on c.converter_id = v.id
				where c.region = ${region} and c.xmin = v.seen::xid order by c.converter_id for update of c skip locked)
			update ${converterCards} c set card_html = locked.html, card_html_build = ${build}
			from locked where c.region = ${region} and c.converter_id = locked.converter_id`);
	} catch (err) {
		console.warn('catalogue: could not keep rendered cards', err);
	}
}

/**
 * One page of cards for a viewpoint: filter, order and page in SQL over the region's cards, in
 * one statement whatever the catalogue's size (counts, the page's cards with `columns` read from
 * converter_card, their best offers' last-checked times, the rates and the dirty probe); a page
 * past the last one shows the last.
 */
async function readCataloguePage<Extra extends object = object>(
	db: Db,
	view: Viewpoint,
	filter: CatalogueFilter & { order?: CardOrder },
	opts: { page?: number; pageSize: number; lastChecked?: boolean },
	columns: SQL
): Promise<Omit<CataloguePage, 'entries'> & { rows: (CardRow & Extra)[]; rates: RatesPerEur }> {
	const day = rateDay();
	const { where, narrowed } = whereFor(view, filter, day);
	const size = opts.pageSize;
	const asked = Math.max(1, opts.page ?? 1);
	const order = orderFor(filter.order ?? filter.sort ?? 'band', filter.includeExpected);
	type Row = CardRow & Extra & { total: number; matching: number; converter_id: number | null };
	const rows = await readCards(db, async () => {
		// the region's count is kept by triggers (migration 0017); only a narrowing filter counts cards
		const total = sql`coalesce((select ${regionCardCounts.cards} from ${regionCardCounts} where ${regionCardCounts.region} = ${view.region}), 0)`;
		const shownPage = sql`(least(${asked}::int, greatest(1, ceil((select matching from counts) / ${size}::float8)::int)) - 1) * ${size}::int`;
		// array(subquery) keeps the subquery's order and `with ordinality` numbers it, so the page's
		// order survives the joins; last-checked times are read for the page's cards only.
		const result = await db.execute(sql`
			with counts as (select ${total} as total, ${narrowed ? sql`(select count(*)::int from ${converterCards} where ${where})` : total} as matching),
			ids as (select id, n from unnest(array(select ${converterCards.converterId} from ${converterCards} where ${where}
					order by ${sql.join(order, sql`, `)} limit ${size}::int offset ${shownPage})) with ordinality as t(id, n)),
			page as (select ids.n, ${converterCards.converterId} as converter_id, ${converterCards.bestListingId}, ${columns}
				from ids join ${converterCards} on ${converterCards.region} = ${view.region} and ${converterCards.converterId} = ids.id)
			select ${onFirstRow(dirtySql)} as dirty, ${onFirstRow(ratesSql(day))} as rates, counts.total, counts.matching, page.*,
				${opts.lastChecked === false ? sql`null` : checkedMs} as checked_ms
			from counts left join page on true
			${opts.lastChecked === false ? sql`` : checkedJoin(sql`page`)}
			order by page.n`);
		return result as unknown as Row[];
	});
	const total = rows[0]?.total ?? 0;
	const matching = rows[0]?.matching ?? 0;
	const pages = Math.max(1, Math.ceil(matching / size));
	return {
		rows: rows.filter((r) => r.converter_id != null),
		rates: rows[0]?.rates ?? {},
		total,
		matching,
		page: Math.min(asked, pages),
		pages,
		pageSize: size
	};
}

/**
 * Some converters' entries for a viewpoint, in the order asked (missing or retired ones left out),
 * and the exchange rates they were priced with, in one statement.
 */
export async function loadEntriesAndRates(
	db: Db,
	view: Viewpoint,
	ids: number[]
): Promise<{ entries: CatalogueEntry[]; rates: RatesPerEur | null }> {
	if (!ids.length) return { entries: [], rates: null };
	const day = rateDay();
	type Row = CardRow & { id: number | null };
	const rows = await readCards(db, async () => {
		const result = await db.execute(sql`
			with cards as (select ${converterCards.converterId} as id, ${converterCards.entry} as entry, ${converterCards.bestListingId}
				from ${converterCards}
				where ${converterCards.region} = ${view.region} and ${converterCards.converterId} = any(${idArray(ids)}::int[]))
			select ${dirtySql} as dirty, ${ratesSql(day)} as rates, cards.id, cards.entry, ${checkedMs} as checked_ms
			from (select 1) one left join cards on true ${checkedJoin(sql`cards`)}`);
		return result as unknown as Row[];
	});
	const byId = new Map(rows.filter((r) => r.id != null).map((r) => [r.id!, r]));
	const rates = rows[0]?.rates ?? null;
	return {
		entries: hydrate(
			ids.filter((id) => byId.has(id)).map((id) => byId.get(id)!),
			view,
			rates ?? {}
		),
		rates
	};
}

/** Some converters' entries for a viewpoint, in the order asked (missing or retired ones left out), in one statement. */
export async function loadEntries(db: Db, view: Viewpoint, ids: number[]): Promise<CatalogueEntry[]> {
	return (await loadEntriesAndRates(db, view, ids)).entries;
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
