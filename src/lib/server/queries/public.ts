/**
 * Read queries behind the public guide (pages and /api/v1). Grades come from the revisions'
 * cached aggregates and the bench runs' stored level reports; prices from the listing states
 * through the pricing helpers. Nothing here recomputes a grade or converts money by hand.
 */
import { and, asc, desc, eq, isNull, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import {
	benchReadings,
	benchRuns,
	converters,
	guidePicks,
	guides,
	listings,
	shops,
	stockEvents,
	revisions
} from '../db/schema';
import { iso, revisionsFor, toOffer, type Viewpoint } from './catalogue-entries';
import { inCurrency, loadCataloguePage, loadEntries, loadEntriesAndRates } from './read-model';
import type { LevelInput, LevelReport } from '../../levels/index';
import { leadGrade, type CatalogueEntry, type CatalogueOffer, type CatalogueRevision } from '../../finder';
import { isBuyable, servesRegion, type RatesPerEur, type Region } from '../../pricing';
import type { Band } from '../../components/bands';
import type { ShopRevisionOdds } from '../../odds';
import { publicRevision, readConverterDoc, runsFor, type ConverterDoc, type RevisionHtml } from './converter-doc';

export type { Viewpoint } from './catalogue-entries';

/**
 * Every live converter as a catalogue entry priced for one viewpoint, read from the cards (the
 * finder ranks them all; pages that show a list use loadCataloguePage instead).
 */
export async function loadCatalogue(db: Database, view: Viewpoint): Promise<CatalogueEntry[]> {
	return (await loadCataloguePage(db, view, { order: 'name' }, { pageSize: 100_000 })).entries;
}

export interface PublicBenchRun {
	id: number;
	measuredBy: string;
	measuredOn: string;
	testSource: string;
	pattern: string;
	instrument: string;
	termination: string;
	fullScaleMv: number;
	band: Band | null;
	score: number | null;
	input: LevelInput;
	report: LevelReport;
}

export interface PublicRevision extends CatalogueRevision {
	chipMaker: string;
	chipNotes: string;
	notes: string;
	scoreMin: number | null;
	scoreMax: number | null;
	rubricVersion: string | null;
	gradedAt: string | null;
	runsDetail: PublicBenchRun[];
	/** Index into runsDetail of the run the revision's band was taken from (engine's median). */
	medianRun: number | null;
	measuredBy: string[];
	/** Every change of the measured and the expected band, oldest first. */
	gradeHistory: Array<{ kind: 'measured' | 'expected'; band: Band | null; detail: string; at: string }>;
}

/**
 * A revision as the converter page sends it to the browser: the run its grade comes from in full
 * (chart, step table, what-if), every run as its one line in the runs list (setup and band mark),
 * without the other runs' readings and reports that the page never shows.
 */
export interface PageRevision extends Omit<PublicRevision, 'runsDetail' | 'medianRun'> {
	median: PublicBenchRun | null;
	runLines: Array<
		Omit<PublicBenchRun, 'input' | 'report'> & {
			mark: Pick<LevelReport, 'band' | 'worstDeviationIre' | 'failReasons'>;
		}
	>;
}

export function pageRevision({ runsDetail, medianRun, ...rest }: PublicRevision): PageRevision {
	return {
		...rest,
		// (no runs when read without them: loadConverterPage's panelsOnly)
		median: medianRun !== null ? (runsDetail[medianRun] ?? null) : null,
		runLines: runsDetail.map(({ input: _input, report, ...run }) => ({
			...run,
			mark: { band: report.band, worstDeviationIre: report.worstDeviationIre, failReasons: report.failReasons }
		}))
	};
}

export interface PublicListing extends CatalogueOffer {
	shipsTo: Region[];
	servesViewer: boolean;
}

export interface TeardownRow {
	id: number;
	revisionCode: string | null;
	chip: string;
	boardMarking: string;
	shopSlug: string | null;
	shopName: string;
	purchaseMonth: string;
	notes: string;
	photoFileId: string | null;
}

export interface ConverterDetail {
	entry: CatalogueEntry;
	revisions: PublicRevision[];
	listings: PublicListing[];
	teardowns: TeardownRow[];
	odds: ShopRevisionOdds[];
	/** Each listing's 90-day figures and notes, by listing id. */
	figures: ConverterDoc['figures'];
	notes: ConverterDoc['notes'];
}

/**
 * One converter with everything its page shows, or null when there is no such live converter:
 * its document (converter-doc.ts) with the offers priced for the viewpoint, the region's card and
 * the listings' last-checked times, read in one statement.
 */
export async function loadConverterDetail(
	db: Database,
	slug: string,
	view: Viewpoint
): Promise<ConverterDetail | null> {
	return (await loadConverterPage(db, slug, view, null))?.detail ?? null;
}

/** Where the converter page's revision panels stand: stored with the document, or to be rendered and stored. */
export interface StoredPanels {
	converterId: number;
	/** The document's row version (storeRevisionsHtml stores over it only); null when built for this read. */
	docVersion: string | null;
	/** The panels `htmlBuild` rendered from this document, if any. */
	stored: RevisionHtml | null;
}

/**
 * loadConverterDetail for the converter page, with the revision panels `htmlBuild` stored with the
 * document. `panelsOnly`: a page that shows the revisions only through their panels; when this
 * build's panels for the converter's name are stored, the revisions come without their bench runs
 * (each runsDetail empty), which are most of the document.
 */
export async function loadConverterPage(
	db: Database,
	slug: string,
	view: Viewpoint,
	htmlBuild: string | null,
	panelsOnly = false
): Promise<{ detail: ConverterDetail; panels: StoredPanels } | null> {
	let read = await readConverterDoc(db, slug, view.region, htmlBuild, panelsOnly);
	if (!read) return null;
	const { checkedMs, card } = read;
	let entry: CatalogueEntry | undefined;
	let rates: RatesPerEur | null = card.rates;
	if (card.entry && !card.dirty) {
		const checked = card.entry.best ? checkedMs[card.entry.best.listingId] : undefined;
		entry = inCurrency(card.entry, view.currency, rates, checked != null ? new Date(checked).toISOString() : null);
	} else {
		// some card waits for its rebuild (a curator's edit): the card read builds them first
		({
			entries: [entry],
			rates
		} = await loadEntriesAndRates(db, view, [read.converterId]));
	}
	if (!entry || !rates) return null;
	// panels stored for another name (a rename) are rendered afresh, from the runs: read them too
	if (!read.runsRead && read.revisionsHtml?.name !== `${entry.brand} ${entry.model}`) {
		read = await readConverterDoc(db, slug, view.region, htmlBuild);
		if (!read) return null;
	}
	const { doc } = read;
	const listingsOut: PublicListing[] = doc.offers
		.map((o) => {
			const checked = checkedMs[o.listingId];
			return {
				...toOffer(
					{ ...o, lastCheckedAt: checked != null ? new Date(checked) : null, lastSuccessAt: null },
					view.currency,
					rates
				),
				shipsTo: o.shipsTo,
				servesViewer: servesRegion(o, view.region)
			};
		})
		.sort(
			(a, b) =>
				Number(b.servesViewer) - Number(a.servesViewer) ||
				Number(isBuyable(b.stock)) - Number(isBuyable(a.stock)) ||
				(a.displayMinor ?? Infinity) - (b.displayMinor ?? Infinity)
		);
	return {
		detail: {
			entry,
			revisions: doc.revisions,
			listings: listingsOut,
			teardowns: doc.teardowns,
			odds: doc.odds,
			figures: doc.figures,
			notes: doc.notes
		},
		panels: { converterId: read.converterId, docVersion: read.docVersion, stored: read.revisionsHtml }
	};
}

/** Several converters' details for the compare page, in the order asked. */
export async function loadCompare(db: Database, slugs: string[], view: Viewpoint): Promise<ConverterDetail[]> {
	const out: ConverterDetail[] = [];
	for (const s of slugs) {
		const d = await loadConverterDetail(db, s, view);
		if (d) out.push(d);
	}
	return out;
}

/** One revision with its converter slug and accepted runs (for /api/v1/revisions/[id]). */
export async function loadRevision(db: Database, id: number) {
	const [r] = await db
		.select({
			converterId: revisions.converterId,
			slug: converters.slug,
			brand: converters.brand,
			model: converters.model
		})
		.from(revisions)
		.innerJoin(converters, eq(converters.id, revisions.converterId))
		.where(and(eq(revisions.id, id), isNull(converters.retiredAt)));
	if (!r) return null;
	const revs = (await revisionsFor(db, [r.converterId])).filter((x) => x.id === id);
	const runs = await runsFor(db, [id]);
	return {
		converter: { slug: r.slug, brand: r.brand, model: r.model },
		revision: publicRevision(revs[0], runs.get(id) ?? [])
	};
}

/** Current listings of one converter, every region (for /api/v1/listings). */
export async function loadListings(db: Database, slug: string, view: Viewpoint) {
	const d = await loadConverterDetail(db, slug, view);
	return d ? d.listings : null;
}

export interface RestockRow {
	id: number;
	at: string;
	converterSlug: string;
	converterName: string;
	shopSlug: string;
	shopName: string;
	shopRegion: Region;
	priceMinor: number | null;
	currency: string | null;
	previousStock: string | null;
	url: string;
	band: Band | null;
	deviationIre: number | null;
	bandReason: string | null;
}

/** The newest restocks (stock events of kind 'restock'), with the converter's lead band. */
export async function loadRestocks(db: Database, limit = 50): Promise<RestockRow[]> {
	const rows = await db
		.select({
			id: stockEvents.id,
			at: stockEvents.at,
			priceMinor: stockEvents.priceMinor,
			currency: stockEvents.currency,
			previousStock: stockEvents.previousStock,
			converterId: converters.id,
			converterSlug: converters.slug,
			brand: converters.brand,
			model: converters.model,
			shopSlug: shops.slug,
			shopName: shops.name,
			shopRegion: shops.region,
			url: listings.url
		})
		.from(stockEvents)
		.innerJoin(listings, eq(listings.id, stockEvents.listingId))
		.innerJoin(shops, eq(shops.id, listings.shopId))
		.innerJoin(converters, eq(converters.id, listings.converterId))
		.where(and(eq(stockEvents.kind, 'restock'), isNull(converters.retiredAt)))
		.orderBy(desc(stockEvents.at), desc(stockEvents.id))
		.limit(limit);
	const revs = await revisionsFor(db, [...new Set(rows.map((r) => r.converterId))]);
	return rows.map((r) => {
		const lead = leadGrade(
			revs.filter((x) => x.converterId === r.converterId).map((x) => ({ ...x, retired: x.retiredAt !== null }))
		);
		return {
			id: r.id,
			at: iso(r.at)!,
			converterSlug: r.converterSlug,
			converterName: `${r.brand} ${r.model}`,
			shopSlug: r.shopSlug,
			shopName: r.shopName,
			shopRegion: r.shopRegion,
			priceMinor: r.priceMinor,
			currency: r.currency,
			previousStock: r.previousStock,
			url: r.url,
			band: lead.band,
			deviationIre: lead.deviationIre,
			bandReason: lead.reason
		};
	});
}

export interface GuideSummary {
	slug: string;
	title: string;
	summary: string;
	publishedAt: string | null;
	updatedAt: string;
	picks: number;
}

/** Published guides, newest first. */
export async function listGuides(db: Database): Promise<GuideSummary[]> {
	const rows = await db
		.select({
			slug: guides.slug,
			title: guides.title,
			summary: guides.summary,
			publishedAt: guides.publishedAt,
			updatedAt: guides.updatedAt,
			picks: sql<number>`(select count(*)::int from ${guidePicks} where ${guidePicks.guideId} = ${guides.id})`
		})
		.from(guides)
		.where(eq(guides.status, 'published'))
		.orderBy(desc(guides.publishedAt), asc(guides.title));
	return rows.map((r) => ({ ...r, publishedAt: iso(r.publishedAt), updatedAt: iso(r.updatedAt)! }));
}

export interface GuidePickView {
	position: number;
	note: string;
	bandAtPick: Band | null;
	entry: CatalogueEntry | null;
	/** The pick's converter can no longer be bought in the viewer's region (or was retired). */
	unbuyable: boolean;
	/** The lead band today differs from the band when the curator picked it. */
	regraded: boolean;
}

/** A published guide with its picks priced and graded live. */
export async function loadGuide(db: Database, slug: string, view: Viewpoint) {
	const [g] = await db
		.select()
		.from(guides)
		.where(and(eq(guides.slug, slug), eq(guides.status, 'published')));
	if (!g) return null;
	const picks = await db
		.select()
		.from(guidePicks)
		.where(eq(guidePicks.guideId, g.id))
		.orderBy(asc(guidePicks.position), asc(guidePicks.converterId));
	const ids = picks.map((p) => p.converterId);
	const entries = await loadEntries(db, view, ids);
	const pickViews: GuidePickView[] = picks.map((p) => {
		const entry = entries.find((e) => e.id === p.converterId) ?? null;
		return {
			position: p.position,
			note: p.note,
			bandAtPick: p.bandAtPick,
			entry,
			unbuyable: !entry?.best,
			regraded: p.bandAtPick !== null && entry !== null && entry.bestBand !== p.bandAtPick
		};
	});
	return {
		slug: g.slug,
		title: g.title,
		summary: g.summary,
		bodyMarkdown: g.bodyMarkdown,
		publishedAt: iso(g.publishedAt),
		updatedAt: iso(g.updatedAt)!,
		picks: pickViews
	};
}

// ---------------------------------------------------------------- open data exports

export interface CatalogueExportRow {
	converter_slug: string;
	brand: string;
	model: string;
	has_audio_out: boolean;
	power: string;
	outputs: string;
	revision_id: number;
	revision_code: string;
	chip: string;
	board_marking: string;
	band: string | null;
	score: number | null;
	deviation_ire: number | null;
	band_reason: string | null;
	/** Expected band of a revision not yet measured (a prediction, never a measurement). */
	expected_band: string | null;
	expected_basis: string | null;
	bench_runs: number;
	rubric_version: string | null;
	retired: boolean;
	last_reviewed_at: string | null;
}

/** One row per revision of every live converter. */
export async function exportCatalogue(db: Database): Promise<CatalogueExportRow[]> {
	const rows = await db.select().from(converters).where(isNull(converters.retiredAt)).orderBy(asc(converters.slug));
	const revs = await revisionsFor(
		db,
		rows.map((r) => r.id)
	);
	return revs
		.map((r) => {
			const c = rows.find((x) => x.id === r.converterId)!;
			return {
				converter_slug: c.slug,
				brand: c.brand,
				model: c.model,
				has_audio_out: c.hasAudioOut,
				power: c.power,
				outputs: c.outputs.join(' '),
				revision_id: r.id,
				revision_code: r.code,
				chip: r.chip,
				board_marking: r.boardMarking,
				band: r.band,
				score: r.score,
				deviation_ire: r.deviationIre,
				band_reason: r.bandReason,
				expected_band: r.expected,
				expected_basis: r.expectedBasis,
				bench_runs: r.runs,
				rubric_version: r.rubricVersion,
				retired: r.retiredAt !== null,
				last_reviewed_at: iso(c.lastReviewedAt)
			};
		})
		.sort((a, b) => a.converter_slug.localeCompare(b.converter_slug) || a.revision_code.localeCompare(b.revision_code));
}

export interface ReadingExportRow {
	converter_slug: string;
	revision_code: string;
	bench_run_id: number;
	measured_on: string;
	measured_by: string;
	termination: string;
	full_scale_mv: number;
	ire: number;
	r_mv: number;
	g_mv: number;
	b_mv: number;
}

/** Every reading of every accepted bench run of live converters. */
export async function exportReadings(db: Database): Promise<ReadingExportRow[]> {
	return db
		.select({
			converter_slug: converters.slug,
			revision_code: revisions.code,
			bench_run_id: benchRuns.id,
			measured_on: benchRuns.measuredOn,
			measured_by: benchRuns.measuredBy,
			termination: benchRuns.termination,
			full_scale_mv: benchRuns.fullScaleMv,
			ire: benchReadings.ire,
			r_mv: benchReadings.rMv,
			g_mv: benchReadings.gMv,
			b_mv: benchReadings.bMv
		})
		.from(benchReadings)
		.innerJoin(benchRuns, eq(benchRuns.id, benchReadings.benchRunId))
		.innerJoin(revisions, eq(revisions.id, benchRuns.revisionId))
		.innerJoin(converters, eq(converters.id, revisions.converterId))
		.where(and(eq(benchRuns.status, 'accepted'), isNull(converters.retiredAt)))
		.orderBy(asc(converters.slug), asc(revisions.code), asc(benchRuns.id), asc(benchReadings.ire));
}
