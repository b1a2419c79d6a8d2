/**
 * The converter page's read model: one `converter_detail` row per converter holding what its page
 * and /api/v1/converters/{slug} show whatever the visitor's region and currency: the revisions with
 * their accepted runs (readings, stored reports) and grade history, the listings' offers in their
 * own currency, the verified teardowns and the odds drawn from them, and each listing's 90-day
 * figures, restock outlook and shop line. A page reads it in one statement, with each listing's
 * last-checked time (every poll moves it), the converter's card in the visitor's region and the rates.
 *
 * Keeping it current: every write to one of its inputs leaves a mark (converter, writing
 * transaction) in `detail_stale` from the writing transaction itself (triggers, migration 0012).
 * A document is built in one repeatable-read snapshot and stored with it; it is stale while a mark
 * exists that its snapshot does not see, once it is DOC_MAX_AGE_SECONDS old (the 90-day window
 * and the outlooks move with the clock), or when older code built it (DOC_SHAPE). A read that finds
 * it stale builds it again. Marks are plain inserts, so writers never wait for each other or for
 * readers; a document replaces the stored one only when its snapshot sees everything the stored
 * one's saw, so a slow rebuild from an older snapshot cannot overwrite a newer document.
 */
import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { benchReadings, benchRuns, converterDetails, converters } from '../db/schema';
import { idArray, inIdList, preparedFor } from '../db/prepared';
import { groupBy, iso, revisionsFor } from './catalogue-entries';
import { currentOffers, rateDay, ratesSql } from './offers';
import { dirtySql } from './read-model';
import { listing90DayFigures } from './history';
import { listingNotes } from './shops';
import { verifiedTeardowns } from '../curate/teardowns';
import { gradeHistoryOf } from '../expected';
import { aggregateRuns, type LevelReport } from '../../levels/index';
import { revisionOdds, type ShopRevisionOdds } from '../../odds';
import type { CurrentOffer, RatesPerEur, Region } from '../../pricing';
import type { CatalogueEntry } from '../../finder';
import type { PublicBenchRun, PublicRevision, TeardownRow } from './public';

/** How long a document stands without a write: the page cache keeps a page as long (PAGE_CACHE_TTL_SECONDS). */
export const DOC_MAX_AGE_SECONDS = 60;

/** Raise it with any change to ConverterDoc or to what buildConverterDoc puts in it: stored documents are then built again. */
export const DOC_SHAPE = 2;

/** A listing's 90-day figures as the page shows them. */
export interface ListingDayFigures {
	lowestMinor: number | null;
	currency: string | null;
	buyableShare: number | null;
	restocks: number;
	typicalRestockHours: number | null;
}

/** A listing's restock outlook in words and its shop's record line. */
export interface ListingNoteView {
	outlook: string | null;
	shopSlug: string;
	shopLine: string | null;
}

/** An offer as stored: everything but the times each poll moves. */
export type StoredOffer = Omit<CurrentOffer, 'lastCheckedAt' | 'lastSuccessAt'>;

export interface ConverterDoc {
	revisions: PublicRevision[];
	offers: StoredOffer[];
	teardowns: TeardownRow[];
	odds: ShopRevisionOdds[];
	/** By listing id. */
	figures: Record<number, ListingDayFigures>;
	notes: Record<number, ListingNoteView>;
}

/** Accepted bench runs (with readings and stored reports) for some revisions. */
export async function runsFor(db: Db, revisionIds: number[]) {
	if (revisionIds.length === 0) return new Map<number, PublicBenchRun[]>();
	const runs = await preparedFor(db, 'accepted_runs', () =>
		db
			.select()
			.from(benchRuns)
			.where(and(inIdList(benchRuns.revisionId, 'ids'), eq(benchRuns.status, 'accepted')))
			.orderBy(asc(benchRuns.measuredOn), asc(benchRuns.id))
			.prepare('accepted_runs')
	).execute({ ids: idArray(revisionIds) });
	const readings = runs.length
		? await preparedFor(db, 'run_readings', () =>
				db
					.select()
					.from(benchReadings)
					.where(inIdList(benchReadings.benchRunId, 'ids'))
					.orderBy(asc(benchReadings.benchRunId), asc(benchReadings.ire))
					.prepare('run_readings')
			).execute({ ids: idArray(runs.map((r) => r.id)) })
		: [];
	const out = new Map<number, PublicBenchRun[]>();
	for (const r of runs) {
		if (!r.report) continue; // a run without its engine report is not shown
		const steps = readings
			.filter((x) => x.benchRunId === r.id)
			.map((x) => ({ ire: x.ire, r: x.rMv, g: x.gMv, b: x.bMv }));
		const list = out.get(r.revisionId) ?? [];
		list.push({
			id: r.id,
			measuredBy: r.measuredBy,
			measuredOn: r.measuredOn,
			testSource: r.testSource,
			pattern: r.pattern,
			instrument: r.instrument,
			termination: r.termination,
			fullScaleMv: r.fullScaleMv,
			band: r.band,
			score: r.score,
			input: { steps, fullScaleMv: r.fullScaleMv },
			report: r.report as LevelReport
		});
		out.set(r.revisionId, list);
	}
	return out;
}

function medianRunIndex(runs: PublicBenchRun[]): number | null {
	if (runs.length === 0) return null;
	try {
		return aggregateRuns(runs.map((r) => r.report)).medianRunIndex;
	} catch {
		return runs.length - 1; // mixed rubric versions: show the newest run
	}
}

type GradeHistoryRow = Awaited<ReturnType<typeof gradeHistoryOf>>[number];

export function publicRevision(
	r: Awaited<ReturnType<typeof revisionsFor>>[number],
	runs: PublicBenchRun[],
	history: GradeHistoryRow[] = []
): PublicRevision {
	return {
		id: r.id,
		code: r.code,
		chip: r.chip,
		chipSlug: r.chipSlug,
		chipMaker: r.chipMaker,
		chipNotes: r.chipNotes,
		boardMarking: r.boardMarking,
		band: r.band,
		score: r.score,
		deviationIre: r.deviationIre,
		bandReason: r.bandReason,
		expected: r.expected,
		expectedBasis: r.expectedBasis,
		expectedDeviationIre: r.expectedDeviationIre,
		scoreMin: r.scoreMin,
		scoreMax: r.scoreMax,
		runs: r.runs,
		retired: r.retiredAt !== null,
		seenFrom: r.seenFrom,
		seenTo: r.seenTo,
		notes: r.notes,
		rubricVersion: r.rubricVersion,
		gradedAt: iso(r.gradedAt),
		runsDetail: runs,
		medianRun: medianRunIndex(runs),
		measuredBy: [...new Set(runs.map((x) => x.measuredBy))],
		gradeHistory: history.map((h) => ({ kind: h.kind, band: h.band, detail: h.detail, at: iso(h.at)! }))
	};
}

/** Work out one converter's document from the catalogue tables (inside the caller's snapshot). */
export async function buildConverterDoc(db: Db, converterId: number, now = new Date()): Promise<ConverterDoc> {
	const [revs, offers, teardownRows] = await Promise.all([
		revisionsFor(db, [converterId]),
		currentOffers(db, [converterId]),
		verifiedTeardowns(db, { converterId })
	]);
	const revisionIds = revs.map((r) => r.id);
	const listingIds = offers.map((o) => o.listingId);
	const [runs, historyRows, figures, notes] = await Promise.all([
		runsFor(db, revisionIds),
		gradeHistoryOf(db, revisionIds),
		listing90DayFigures(db, listingIds, now),
		listingNotes(db, listingIds, now)
	]);
	const history = groupBy(historyRows, (h) => h.revisionId);
	const teardowns: TeardownRow[] = teardownRows.map((t) => ({
		id: t.id,
		revisionCode: t.revision,
		chip: t.chip ?? t.chipText,
		boardMarking: t.boardMarking,
		shopSlug: t.shopSlug,
		shopName: t.shop ?? t.shopNameOther ?? 'another shop',
		purchaseMonth: t.purchaseMonth,
		notes: t.notes,
		photoFileId: t.photoFileId
	}));
	const odds = revisionOdds(
		teardowns
			.filter((t) => t.shopSlug && t.revisionCode)
			.map((t) => ({ shopSlug: t.shopSlug!, shopName: t.shopName, revisionCode: t.revisionCode! })),
		revs.map((r) => r.code)
	);
	return {
		revisions: revs.map((r) => publicRevision(r, runs.get(r.id) ?? [], history.get(r.id))),
		offers: offers.map(({ lastCheckedAt: _checked, lastSuccessAt: _success, ...o }) => o),
		teardowns,
		odds,
		figures: Object.fromEntries(
			[...figures].map(([id, f]) => [
				id,
				{
					lowestMinor: f.lowestMinor,
					currency: f.currency,
					buyableShare: f.buyableShare,
					restocks: f.restocks,
					typicalRestockHours: f.typicalRestockHours
				}
			])
		),
		notes: Object.fromEntries(
			[...notes].map(([id, n]) => [id, { outlook: n.outlook.text, shopSlug: n.shop.slug, shopLine: n.shop.line }])
		)
	};
}

/**
 * Build a converter's document in one snapshot and store it unless the stored one saw something this
 * snapshot does not; then drop the marks the stored document has seen. (`build`: tests commit a
 * write, or run another rebuild, in the middle of it.)
 */
export async function rebuildConverterDoc(
	db: Db,
	converterId: number,
	build: typeof buildConverterDoc = buildConverterDoc
): Promise<ConverterDoc> {
	const built = await db.transaction(
		async (tx) => {
			// the transaction's first statement takes its snapshot; the clock is read after it
			const [row] = (await tx.execute(
				sql`select pg_current_snapshot()::text as snapshot, clock_timestamp()::text as built_at`
			)) as unknown as Array<{ snapshot: string; built_at: string }>;
			return { ...row, doc: await build(tx, converterId) };
		},
		{ isolationLevel: 'repeatable read', accessMode: 'read only' }
	);
	await db.execute(sql`
		with stored as (
			insert into converter_detail (converter_id, doc, runs, shape, snapshot, built_at)
			select id, ${JSON.stringify(withoutRuns(built.doc))}::json, ${JSON.stringify(built.doc.revisions.map((r) => r.runsDetail))}::json,
				${DOC_SHAPE}::int, ${built.snapshot}::pg_snapshot, ${built.built_at}::timestamptz
			from converter where id = ${converterId}
			on conflict (converter_id) do update
				set doc = excluded.doc, runs = excluded.runs, shape = excluded.shape, snapshot = excluded.snapshot, built_at = excluded.built_at,
					revisions_html = null, revisions_name = null, html_build = null
				-- the new snapshot sees every transaction the stored one saw (clock order is not snapshot order)
				where pg_snapshot_xmax(converter_detail.snapshot) <= pg_snapshot_xmax(excluded.snapshot)
					and not exists (select 1 from pg_snapshot_xip(excluded.snapshot) x
						where pg_visible_in_snapshot(x, converter_detail.snapshot))
			returning snapshot)
		delete from detail_stale m using stored
		where m.converter_id = ${converterId} and pg_visible_in_snapshot(m.xid, stored.snapshot)`);
	return built.doc;
}

/** A stored document with its revisions' bench runs put back, when they were read. */
function withRuns(doc: ConverterDoc, runs: PublicBenchRun[][] | null): ConverterDoc {
	if (!runs) return doc;
	return { ...doc, revisions: doc.revisions.map((r, i) => ({ ...r, runsDetail: runs[i] ?? [] })) };
}

/** A document as stored in `doc`: its revisions' bench runs are kept apart, in `runs`. */
function withoutRuns(doc: ConverterDoc): ConverterDoc {
	return { ...doc, revisions: doc.revisions.map((r) => ({ ...r, runsDetail: [] })) };
}

/** A document's revision panels as the page shows them (one HTML text), for the converter name they show. */
export interface RevisionHtml {
	name: string;
	html: string;
}

/** What a page reads: the document (built again first when stale) and the listings' last-checked times. */
export interface ConverterDocRead {
	converterId: number;
	doc: ConverterDoc;
	/** false when the bench runs were left out (readConverterDoc's `withoutStoredRuns`): every runsDetail is empty. */
	runsRead: boolean;
	/** The panels stored with the document by the build asked for; null when there are none. */
	revisionsHtml: RevisionHtml | null;
	/** The version of the stored row the document was read from (its xmin); null when it was built for this read. */
	docVersion: string | null;
	/** Epoch milliseconds by listing id; a listing never checked is missing. */
	checkedMs: Record<number, number>;
	/** The converter's card in the region asked, as stored, with today's rates; `dirty` when some card waits for a rebuild. */
	card: { entry: CatalogueEntry | null; rates: RatesPerEur; dirty: boolean };
}

/**
 * Requests in this process that find one converter's document stale share a rebuild, but only one
 * whose snapshot comes after their own read: a request that saw a write's mark must get a document
 * with that write, so it never joins a rebuild that had already started. It queues one after it.
 */
interface Flight {
	/** performance.now() when the rebuild started (took its snapshot); Infinity while it waits its turn. */
	startedAt: number;
	doc: Promise<ConverterDoc>;
}
const rebuilding = new Map<number, Flight>();

function rebuildAfter(db: Db, converterId: number, readAt: number): Promise<ConverterDoc> {
	const current = rebuilding.get(converterId);
	if (current && current.startedAt >= readAt) return current.doc;
	const flight = { startedAt: Infinity } as Flight;
	flight.doc = (current ? current.doc.catch(() => undefined) : Promise.resolve(undefined))
		.then(() => {
			flight.startedAt = performance.now();
			return rebuildConverterDoc(db, converterId);
		})
		.finally(() => {
			if (rebuilding.get(converterId) === flight) rebuilding.delete(converterId);
		});
	rebuilding.set(converterId, flight);
	return flight.doc;
}

/**
 * A live converter's document by slug, with its card in one region and today's rates, in one
 * statement; null when there is no such live converter.
 *
 * `withoutStoredRuns`: leave the bench runs out when the panels `htmlBuild` rendered are stored
 * (each revision's runsDetail is then empty and `runsRead` false): a page that shows those panels
 * needs nothing else of them.
 */
export async function readConverterDoc(
	db: Db,
	slug: string,
	region: Region,
	htmlBuild: string | null = null,
	withoutStoredRuns = false
): Promise<ConverterDocRead | null> {
	const readAt = performance.now();
	const [row] = await preparedFor(db, 'converter_doc_by_slug', () =>
		db
			.select({
				id: converters.id,
				doc: converterDetails.doc,
				runs: sql<PublicBenchRun[][] | null>`case when not (${sql.placeholder('slim')}::boolean
					and ${converterDetails.htmlBuild} = ${sql.placeholder('build')} and ${converterDetails.revisionsHtml} is not null)
					then ${converterDetails.runs} end`,
				revisionsHtml: sql<string | null>`case when ${converterDetails.htmlBuild} = ${sql.placeholder('build')}
					then ${converterDetails.revisionsHtml} end`,
				revisionsName: converterDetails.revisionsName,
				docVersion: sql<string | null>`${converterDetails}.xmin::text`,
				stale: sql<boolean>`(${converterDetails.builtAt} is null
					or ${converterDetails.shape} <> ${sql.raw(String(DOC_SHAPE))}
					or ${converterDetails.builtAt} < now() - ${sql.raw(`interval '${DOC_MAX_AGE_SECONDS} seconds'`)}
					or exists (select 1 from detail_stale m where m.converter_id = ${converters.id}
						and not pg_visible_in_snapshot(m.xid, ${converterDetails.snapshot})))`,
				checked: sql<Record<number, number> | null>`(select json_object_agg(ls.listing_id,
					floor(extract(epoch from ls.last_checked_at) * 1000)::float8)
					from listing l join listing_state ls on ls.listing_id = l.id
					where l.converter_id = ${converters.id} and ls.last_checked_at is not null)`,
				entry: sql<CatalogueEntry | null>`(select cc.entry from converter_card cc
					where cc.region = ${sql.placeholder('region')} and cc.converter_id = ${converters.id})`,
				rates: sql<RatesPerEur>`${ratesSql(sql.placeholder('day'))}`,
				cardsDirty: dirtySql
			})
			.from(converters)
			.leftJoin(converterDetails, eq(converterDetails.converterId, converters.id))
			.where(and(eq(converters.slug, sql.placeholder('slug')), isNull(converters.retiredAt)))
			.prepare('converter_doc_by_slug')
	).execute({ slug, region, day: rateDay(), build: htmlBuild, slim: withoutStoredRuns });
	if (!row) return null;
	const doc = row.stale ? await rebuildAfter(db, row.id, readAt) : withRuns(row.doc as ConverterDoc, row.runs);
	return {
		converterId: row.id,
		doc,
		runsRead: row.stale || row.runs != null,
		revisionsHtml:
			row.stale || row.revisionsHtml == null || row.revisionsName == null
				? null
				: { name: row.revisionsName, html: row.revisionsHtml },
		docVersion: row.stale ? null : row.docVersion,
		checkedMs: row.checked ?? {},
		card: { entry: row.entry, rates: row.rates, dirty: row.cardsDirty }
	};
}

/**
 * Keep a document's rendered revision panels with it, best effort: only over the row version the
 * document was read from (a replaced document keeps its null), skipping a row another transaction
 * holds rather than waiting for it. A failure costs the next page a render, never this one.
 */
export async function storeRevisionsHtml(
	db: Db,
	converterId: number,
	docVersion: string,
	build: string,
	html: RevisionHtml
): Promise<void> {
	try {
		await db.execute(sql`
			with locked as (select converter_id from converter_detail
				where converter_id = ${converterId} and xmin = ${docVersion}::xid for update skip locked)
			update converter_detail d set revisions_html = ${html.html}, revisions_name = ${html.name}, html_build = ${build}
			from locked where d.converter_id = locked.converter_id`);
	} catch (err) {
		console.warn('converter page: could not keep rendered revision panels', err);
	}
}

/**
 * Marks no document needs any more (the jobs process's housekeeping): those the stored document's
 * snapshot sees, and any older than an hour. A document is built again after DOC_MAX_AGE_SECONDS
 * anyway, so an old mark can only matter to a document a minute old whose writer ran for an hour:
 * at worst that document stands until its age runs out. Without the second rule the marks of a
 * converter nobody reads would pile up with every poll.
 */
export async function pruneDetailMarks(db: Db): Promise<number> {
	const rows = (await db.execute(sql`
		delete from detail_stale m
		where m.at < now() - interval '1 hour'
			or exists (select 1 from converter_detail d where d.converter_id = m.converter_id
				and pg_visible_in_snapshot(m.xid, d.snapshot))
		returning 1`)) as unknown as unknown[];
	return rows.length;
}
