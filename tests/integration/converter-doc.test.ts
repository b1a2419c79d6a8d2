/**
 * The converter page's read model (src/lib/server/queries/converter-doc.ts): a stored document says
 * what one built from the tables says; a write to any of its inputs, by any path, shows on the next
 * read; a write committed while a document is being built is not lost; an old document is built
 * again; and housekeeping drops only the marks a stored document has seen.
 * The reference for every check is the same document built straight from the tables
 * (buildConverterDoc), not a published figure. Snapshot visibility is PostgreSQL's
 * (PostgreSQL 15 documentation, "System Information Functions and Operators", table "Snapshot
 * Information Functions": pg_current_snapshot, pg_visible_in_snapshot, pg_snapshot_xmax, pg_snapshot_xip).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import * as schema from '../../src/lib/server/db/schema';
import { freshDatabase } from './helpers/db';
import { loadBenchCatalogue } from '../../scripts/lib/bench-catalogue';
import {
	buildConverterDoc,
	DOC_MAX_AGE_SECONDS,
	DOC_SHAPE,
	pruneDetailMarks,
	readConverterDoc,
	rebuildConverterDoc,
	storeRevisionsHtml,
	type ConverterDoc
} from '../../src/lib/server/queries/converter-doc';
import { loadConverterDetail, loadConverterPage } from '../../src/lib/server/queries/public';
import { loadEntriesAndRates } from '../../src/lib/server/queries/read-model';

describe('converter page read model', () => {
	let h: Awaited<ReturnType<typeof freshDatabase>>;
	const SLUG = 'bench-box-3';
	let id: number;

	beforeAll(async () => {
		h = await freshDatabase('sg_it_converter_doc');
		await loadBenchCatalogue(h.sql, { converters: 8, per: 3, historyPoints: 6 });
		[{ id }] = await h.db
			.select({ id: schema.converters.id })
			.from(schema.converters)
			.where(eq(schema.converters.slug, SLUG));
	}, 120_000);
	afterAll(async () => {
		await h?.close();
	});

	const builtAt = async () =>
		(
			await h.db
				.select({ at: schema.converterDetails.builtAt })
				.from(schema.converterDetails)
				.where(eq(schema.converterDetails.converterId, id))
		)[0]?.at.getTime() ?? null;
	const read = async () => (await readConverterDoc(h.db, SLUG, 'eu'))!.doc;
	/** Figures move with the clock (the buyable share of a window ending now): compared apart. */
	const withoutFigures = ({ figures: _f, ...rest }: ConverterDoc) => rest;

	it('stores a document equal to one built from the tables, and serves it until something changes', async () => {
		expect(await builtAt()).toBeNull();
		const first = await read();
		const stored = await builtAt();
		expect(stored).not.toBeNull();
		const again = await read();
		expect(await builtAt()).toBe(stored); // served, not built again
		// The JSON round trip keeps every value and type (a Date would not equal its string).
		const fresh = await buildConverterDoc(h.db, id);
		expect(again).toStrictEqual(JSON.parse(JSON.stringify(again)));
		expect(JSON.stringify(withoutFigures(again))).toBe(JSON.stringify(withoutFigures(fresh)));
		expect(Object.keys(again.figures).sort()).toEqual(Object.keys(fresh.figures).sort());
		for (const [listing, f] of Object.entries(fresh.figures)) {
			expect(again.figures[Number(listing)].restocks).toBe(f.restocks);
			expect(again.figures[Number(listing)].lowestMinor).toBe(f.lowestMinor);
		}
		expect(first.offers.length).toBeGreaterThan(0);
		expect(first.revisions.some((r) => r.runsDetail.length > 0)).toBe(true);
		// The page's detail is the document priced for the viewpoint.
		const detail = (await loadConverterDetail(h.db, SLUG, { region: 'eu', currency: 'EUR' }))!;
		expect(detail.revisions).toEqual(again.revisions);
		expect(detail.listings.map((l) => l.listingId).sort()).toEqual(again.offers.map((o) => o.listingId).sort());
	});

	it("reads the region's card and the rates in the same statement, as the card read prices them", async () => {
		for (const view of [
			{ region: 'eu', currency: 'EUR' },
			{ region: 'uk', currency: 'USD' }
		] as const) {
			const viaCards = await loadEntriesAndRates(h.db, view, [id]);
			const detail = (await loadConverterDetail(h.db, SLUG, view))!;
			expect(detail.entry).toEqual(viaCards.entries[0]);
			if (detail.entry.best) expect(detail.entry.best.lastCheckedAt).not.toBeNull();
			// with a card waiting for its rebuild, the page reads through the cards, which build it first
			await h.sql`insert into card_dirty (converter_id) values (${id}) on conflict do nothing`;
			expect((await loadConverterDetail(h.db, SLUG, view))!.entry).toEqual(viaCards.entries[0]);
			expect(await h.sql`select 1 from card_dirty`).toHaveLength(0);
		}
	});

	// One write per input the page shows, as any writer (poller, curator, jobs) would make it in SQL.
	const writes: Array<[string, () => Promise<unknown>, (doc: ConverterDoc) => void]> = [
		[
			"a listing's price",
			() =>
				h.sql`update listing_state set current_price_minor = 123457
					where listing_id = (select min(id) from listing where converter_id = ${id})`,
			(doc) => expect(doc.offers.some((o) => o.priceMinor === 123457)).toBe(true)
		],
		[
			'a new observation (the 90-day figures)',
			() =>
				h.sql`insert into observation (listing_id, observed_at, price_minor, currency, stock)
					select l.id, now() - interval '1 hour', 101, ls.current_currency, 'in_stock'
					from listing l join listing_state ls on ls.listing_id = l.id
					where l.id = (select min(id) from listing where converter_id = ${id})`,
			(doc) => expect(Object.values(doc.figures).some((f) => f.lowestMinor === 101)).toBe(true)
		],
		[
			"a shop's record line",
			() =>
				h.sql`insert into shop_record (shop_id, line, computed_at)
					select shop_id, 'a line written by the jobs process', now() from listing where converter_id = ${id} limit 1
					on conflict (shop_id) do update set line = excluded.line`,
			(doc) =>
				expect(Object.values(doc.notes).some((n) => n.shopLine === 'a line written by the jobs process')).toBe(true)
		],
		[
			'a grade history entry',
			() =>
				h.sql`insert into grade_history (revision_id, kind, band, detail, at)
					select id, 'measured', 'fair', 'written by a test', now() from revision where converter_id = ${id} limit 1`,
			(doc) =>
				expect(doc.revisions.some((r) => r.gradeHistory.some((g) => g.detail === 'written by a test'))).toBe(true)
		],
		[
			"a bench run's reading",
			() =>
				h.sql`update bench_reading set r_mv = 351.5 where ire = 50 and bench_run_id = (
					select min(b.id) from bench_run b join revision r on r.id = b.revision_id
					where r.converter_id = ${id} and b.status = 'accepted')`,
			(doc) =>
				expect(
					doc.revisions.some((r) =>
						r.runsDetail.some((run) => run.input.steps.some((s) => s.ire === 50 && s.r === 351.5))
					)
				).toBe(true)
		],
		[
			'a verified teardown',
			() =>
				h.sql`insert into teardown_report (converter_id, purchase_month, chip_text, board_marking, notes, status)
					values (${id}, '2026-01-01', 'a chip', 'BOARD-T1', 'opened by a test', 'verified')`,
			(doc) => expect(doc.teardowns.some((t) => t.boardMarking === 'BOARD-T1')).toBe(true)
		],
		[
			'a delisting',
			() =>
				h.sql`update listing set delisted_at = now()
					where id = (select max(id) from listing where converter_id = ${id} and delisted_at is null)`,
			(doc) => expect(doc.offers.length).toBeGreaterThan(0)
		],
		[
			'a bench run taken back',
			() =>
				h.sql`update bench_run set status = 'rejected' where id = (
					select max(b.id) from bench_run b join revision r on r.id = b.revision_id
					where r.converter_id = ${id} and b.status = 'accepted')`,
			() => {}
		],
		[
			'the name of the chip of one of its revisions',
			() =>
				h.sql`update chip set name = 'Renamed chip' where id = (select min(chip_id) from revision where converter_id = ${id})`,
			(doc) => expect(doc.revisions.some((r) => r.chip === 'Renamed chip')).toBe(true)
		],
		[
			'the name of a chip only a teardown names',
			async () => {
				await h.sql`insert into chip (slug, name, maker, notes) values ('teardown-only', 'Found inside', 'a maker', '')`;
				await h.sql`insert into teardown_report (converter_id, purchase_month, chip_id, board_marking, status)
					select ${id}, '2026-02-01', id, 'BOARD-T2', 'verified' from chip where slug = 'teardown-only'`;
				await read();
				await h.sql`update chip set name = 'Found inside, renamed' where slug = 'teardown-only'`;
			},
			(doc) => expect(doc.teardowns.some((t) => t.chip === 'Found inside, renamed')).toBe(true)
		],
		[
			"a revision's notes",
			() => h.sql`update revision set notes = 'revised by a test' where converter_id = ${id}`,
			(doc) => expect(doc.revisions.every((r) => r.notes === 'revised by a test')).toBe(true)
		]
	];

	it.each(writes)('shows %s on the next read', async (_name, write, check) => {
		await read(); // current before the write
		const before = await builtAt();
		await write();
		const doc = await read();
		expect(await builtAt()).toBeGreaterThan(before!);
		check(doc);
		expect(JSON.stringify(withoutFigures(doc))).toBe(JSON.stringify(withoutFigures(await buildConverterDoc(h.db, id))));
	});

	it('does not lose a write that commits while a document is being built', async () => {
		await read();
		// The rebuild's snapshot is taken; a poll commits a new price; then the rebuild reads and stores.
		const during = await rebuildConverterDoc(h.db, id, async (tx, converterId) => {
			await h.sql`update listing_state set current_price_minor = 98765
				where listing_id = (select min(id) from listing where converter_id = ${id})`;
			return buildConverterDoc(tx, converterId);
		});
		expect(during.offers.some((o) => o.priceMinor === 98765)).toBe(false);
		// The stored document's snapshot did not see the write, so its mark survived: the next read builds again.
		expect((await read()).offers.some((o) => o.priceMinor === 98765)).toBe(true);
	});

	it('keeps the stored document when a rebuild from an older snapshot finishes after a newer one', async () => {
		await read();
		let release!: () => void;
		const gate = new Promise<void>((r) => (release = r));
		let inside!: () => void;
		const started = new Promise<void>((r) => (inside = r));
		// R1 takes its snapshot, then waits
		const r1 = rebuildConverterDoc(h.db, id, async (tx, converterId) => {
			inside();
			await gate;
			return buildConverterDoc(tx, converterId);
		});
		await started;
		await h.sql`update listing_state set current_price_minor = 55555
			where listing_id = (select min(id) from listing where converter_id = ${id})`;
		await rebuildConverterDoc(h.db, id); // R2: a later snapshot, with the write; its mark is dropped
		// Even with R2's clock reading behind R1's, the snapshots decide.
		await h.sql`update converter_detail set built_at = built_at - interval '1 hour' where converter_id = ${id}`;
		release();
		expect((await r1).offers.some((o) => o.priceMinor === 55555)).toBe(false);
		const [stored] = await h.sql<
			Array<{ doc: ConverterDoc }>
		>`select doc from converter_detail where converter_id = ${id}`;
		expect(stored.doc.offers.some((o) => o.priceMinor === 55555)).toBe(true);
	});

	describe('revision panels kept with the document', () => {
		const html = { name: 'Test Box', html: '<article>A</article><article>B</article>' };
		const readAs = (build: string | null) => readConverterDoc(h.db, SLUG, 'eu', build);

		it('are read back by the build that stored them, and by no other', async () => {
			await readAs('build-1'); // builds the document if a write left it stale
			const first = (await readAs('build-1'))!;
			expect(first.revisionsHtml).toBeNull();
			expect(first.docVersion).toMatch(/^\d+$/);
			await storeRevisionsHtml(h.db, id, first.docVersion!, 'build-1', html);
			expect((await readAs('build-1'))!.revisionsHtml).toEqual(html);
			expect((await readAs('build-2'))!.revisionsHtml).toBeNull();
			expect((await readAs(null))!.revisionsHtml).toBeNull();
			// the page's read carries them through
			const page = (await loadConverterPage(h.db, SLUG, { region: 'eu', currency: 'EUR' }, 'build-1'))!;
			expect(page.panels).toMatchObject({ converterId: id, stored: html });
		});

		it('go with the document they were rendered from: a new document has none', async () => {
			await readAs('build-3');
			const before = (await readAs('build-3'))!;
			await storeRevisionsHtml(h.db, id, before.docVersion!, 'build-3', html);
			await rebuildConverterDoc(h.db, id);
			const after = (await readAs('build-3'))!;
			expect(after.revisionsHtml).toBeNull();
			expect(after.docVersion).not.toBe(before.docVersion);
		});

		it('are never stored over a document replaced since it was read', async () => {
			await readAs('build-4');
			const seen = (await readAs('build-4'))!.docVersion!;
			expect(seen).toMatch(/^\d+$/);
			await rebuildConverterDoc(h.db, id); // replaced while the page rendered
			await storeRevisionsHtml(h.db, id, seen, 'build-4', html);
			expect((await readAs('build-4'))!.revisionsHtml).toBeNull();
		});

		it('keep the bench runs apart: read with the document unless the page has its panels stored', async () => {
			const eu = { region: 'eu' as const, currency: 'EUR' };
			await readAs('build-6');
			const full = (await readAs('build-6'))!;
			const runs = full.doc.revisions.map((r) => r.runsDetail);
			expect(runs.flat().length).toBeGreaterThan(0);
			// stored apart: the document's revisions carry none, `runs` has them in revision order
			const [row] = await h.sql<Array<{ doc: ConverterDoc; runs: unknown }>>`
				select doc, runs from converter_detail where converter_id = ${id}`;
			expect(row.doc.revisions.map((r) => r.runsDetail)).toEqual(runs.map(() => []));
			expect(row.runs).toEqual(runs);
			// without panels stored for this build, a read that could do without runs still gets them
			const noPanels = (await readConverterDoc(h.db, SLUG, 'eu', 'build-6', true))!;
			expect(noPanels.runsRead).toBe(true);
			expect(noPanels.doc).toEqual(full.doc);
			const name = `${full.card.entry!.brand} ${full.card.entry!.model}`;
			await storeRevisionsHtml(h.db, id, full.docVersion!, 'build-6', { name, html: '<article>A</article>' });
			const slim = (await readConverterDoc(h.db, SLUG, 'eu', 'build-6', true))!;
			expect(slim.runsRead).toBe(false);
			expect(slim.doc.revisions.map((r) => r.runsDetail)).toEqual(runs.map(() => []));
			expect({ ...slim.doc, revisions: [] }).toEqual({ ...full.doc, revisions: [] });
			// another build, or a read that needs them, gets the runs
			expect((await readConverterDoc(h.db, SLUG, 'eu', 'build-7', true))!.doc).toEqual(full.doc);
			expect((await readConverterDoc(h.db, SLUG, 'eu', 'build-6'))!.doc).toEqual(full.doc);
			// the page: its stored panels, without the runs
			const page = (await loadConverterPage(h.db, SLUG, eu, 'build-6', true))!;
			expect(page.panels.stored).toEqual({ name, html: '<article>A</article>' });
			expect(page.detail.revisions.flatMap((r) => r.runsDetail)).toEqual([]);
			// panels stored for another name are rendered afresh, so the page reads the runs after all
			const version = (await readAs('build-6'))!.docVersion!; // the store above made a new row version
			await storeRevisionsHtml(h.db, id, version, 'build-6', {
				name: 'Old Name',
				html: '<article>B</article>'
			});
			const renamed = (await loadConverterPage(h.db, SLUG, eu, 'build-6', true))!;
			expect(renamed.panels.stored?.name).toBe('Old Name');
			expect(renamed.detail.revisions.map((r) => r.runsDetail)).toEqual(runs);
			// and the API's detail always has them
			expect((await loadConverterDetail(h.db, SLUG, eu))!.revisions.map((r) => r.runsDetail)).toEqual(runs);
		});

		it('are not read from a document the read had to build again', async () => {
			await readAs('build-5');
			const read = (await readAs('build-5'))!;
			await storeRevisionsHtml(h.db, id, read.docVersion!, 'build-5', html);
			await h.sql`update converter_detail set built_at = built_at - make_interval(secs => ${DOC_MAX_AGE_SECONDS + 1})
				where converter_id = ${id}`;
			const rebuilt = (await readAs('build-5'))!;
			expect(rebuilt.revisionsHtml).toBeNull();
			expect(rebuilt.docVersion).toBeNull();
		});
	});

	it('builds a document again when older code built it', async () => {
		await read();
		await h.sql`update converter_detail set shape = shape - 1 where converter_id = ${id}`;
		await read();
		const [row] = await h.sql<Array<{ shape: number }>>`select shape from converter_detail where converter_id = ${id}`;
		expect(row.shape).toBe(DOC_SHAPE);
	});

	it(`builds a document again once it is ${DOC_MAX_AGE_SECONDS} s old (its figures move with the clock)`, async () => {
		await read();
		await h.sql`update converter_detail set built_at = built_at - make_interval(secs => ${DOC_MAX_AGE_SECONDS + 1})
			where converter_id = ${id}`;
		const aged = await builtAt();
		await read();
		expect(await builtAt()).toBeGreaterThan(aged!);
	});

	it('housekeeping drops the marks no document needs, and keeps the others', async () => {
		const [other] = await h.db
			.select({ id: schema.converters.id })
			.from(schema.converters)
			.where(eq(schema.converters.slug, 'bench-box-5'));
		await read();
		await h.sql`delete from converter_detail where converter_id = ${other.id}`;
		await h.sql`delete from detail_stale`;
		// seen by the stored document: the oldest transaction id there is
		await h.sql`insert into detail_stale (converter_id, xid) values (${id}, '3')`;
		// not seen by it: a write committed after it was built
		await h.sql`update revision set notes = 'written after the document' where converter_id = ${id}`;
		// an hour old: it goes, seen or not (the document's age limit covers it)
		await h.sql`insert into detail_stale (converter_id, xid, at) values (${id}, '999999999', now() - interval '2 hours')`;
		// no document: an old mark goes, a recent one (a rebuild may be reading) stays
		await h.sql`insert into detail_stale (converter_id, xid, at) values (${other.id}, '4', now() - interval '2 hours')`;
		await h.sql`insert into detail_stale (converter_id, xid) values (${other.id}, '5')`;
		expect(await pruneDetailMarks(h.db)).toBe(3);
		const marks = await h.sql<Array<{ converter_id: number; xid: string }>>`
			select converter_id, xid::text from detail_stale order by converter_id, xid`;
		expect(marks.map((m) => [m.converter_id, m.xid === '5' ? 'recent' : 'writer'])).toEqual(
			[
				[id, 'writer'],
				[other.id, 'recent']
			].sort((a, b) => Number(a[0]) - Number(b[0]))
		);
		expect((await read()).revisions.every((r) => r.notes === 'written after the document')).toBe(true);
	});
});
