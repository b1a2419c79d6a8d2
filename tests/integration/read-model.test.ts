/**
 * The public read model (src/lib/server/queries/read-model.ts) on a generated catalogue:
 * a catalogue request runs the same few SQL statements at 50 and at 2,000 converters; the
 * cards say what the catalogue rules ($lib/finder, $lib/pricing) say when computed straight from
 * the tables; and a price, a grade or an exchange rate written by any path shows on the next read.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import postgres from 'postgres';
import { drizzle } from 'drizzle-orm/postgres-js';
import { and, eq, inArray, sql as dsql, TransactionRollbackError } from 'drizzle-orm';
import * as schema from '../../src/lib/server/db/schema';
import { freshDatabase } from './helpers/db';
import { loadBenchCatalogue } from '../../scripts/lib/bench-catalogue';
import {
	apiItemText,
	loadApiCataloguePage,
	loadCatalogueHtmlPage,
	loadCataloguePage,
	loadEntries,
	refreshCards,
	refreshListingCards,
	storeCardHtml
} from '../../src/lib/server/queries/read-model';
import { buildEntries, revisionsFor } from '../../src/lib/server/queries/catalogue-entries';
import { currentOffers, loadRates } from '../../src/lib/server/queries/offers';
import { regradeRevision } from '../../src/lib/server/grading';
import { loadConverterDetail } from '../../src/lib/server/queries/public';
import { apiConverter } from '../../src/lib/server/queries/public-api';
import { filterCatalogue, type CatalogueEntry, type CatalogueFilter } from '../../src/lib/finder';
import { bandRank } from '../../src/lib/components/bands';
import { REGION_CODES, type Region } from '../../src/lib/pricing';

describe('public read model', () => {
	let h: Awaited<ReturnType<typeof freshDatabase>>;
	let counted: ReturnType<typeof postgres>;
	let statements = 0;
	let lastStatement: { query: string; params: unknown[] } | null = null;
	let cdb: ReturnType<typeof drizzle<typeof schema>>;

	beforeAll(async () => {
		h = await freshDatabase('sg_it_read_model');
		// postgres.js calls `debug` once per statement sent: the counter the scaling test reads.
		counted = postgres(h.url, {
			max: 2,
			onnotice: () => {},
			debug: (_c, query, params) => {
				statements++;
				lastStatement = { query, params: params as unknown[] };
			}
		});
		cdb = drizzle(counted, { schema });
		await loadBenchCatalogue(h.sql, { converters: 50, per: 3, historyPoints: 3 });
	}, 120_000);
	afterAll(async () => {
		await counted?.end({ timeout: 5 });
		await h?.close();
	});

	async function statementsFor(run: () => Promise<unknown>) {
		await run(); // the first read after a load rebuilds dirty cards
		statements = 0;
		await run();
		return statements;
	}

	const requests: Array<[string, () => Promise<unknown>]> = [
		[
			'default page',
			() => loadCataloguePage(cdb, { region: 'eu', currency: 'EUR' }, { sort: 'band' }, { pageSize: 48 })
		],
		[
			'price filter in another currency, page 2',
			() =>
				loadCataloguePage(
					cdb,
					{ region: 'na', currency: 'GBP' },
					{ sort: 'price', priceMin: 500, priceMax: 5000, inStock: true },
					{ page: 2, pageSize: 48 }
				)
		],
		[
			'by name, audio, Close or better',
			() =>
				loadCataloguePage(
					cdb,
					{ region: 'uk', currency: 'GBP' },
					{ sort: 'name', audio: true, minBand: 'close' },
					{ pageSize: 48 }
				)
		]
	];

	it('runs as many SQL statements per catalogue request at 2,000 converters as at 50', async () => {
		const small = [];
		for (const [, run] of requests) small.push(await statementsFor(run));
		await loadBenchCatalogue(h.sql, { converters: 1950, per: 3, historyPoints: 3, start: 50 });
		const large = [];
		for (const [, run] of requests) large.push(await statementsFor(run));
		expect(large).toEqual(small);
		// one statement: counts, the page with its last-checked times, the rates and the dirty probe
		for (const n of large) expect(n).toBe(1);
		const page = await loadCataloguePage(cdb, { region: 'eu', currency: 'EUR' }, {}, { pageSize: 48 });
		expect(page.total).toBe(2000);
		expect(page.entries).toHaveLength(48);
	}, 300_000);

	it('pages the default order by walking the band index, not by sorting a whole band (2,000 converters)', async () => {
		const [{ n }] = await h.sql`select count(*)::int as n from converter`;
		if (n < 2000) await loadBenchCatalogue(h.sql, { converters: 2000 - n, per: 3, historyPoints: 3, start: n });
		await loadCataloguePage(cdb, { region: 'eu', currency: 'EUR' }, { sort: 'band' }, { pageSize: 48 }); // builds cards
		await h.sql`analyze converter_card`;
		await loadCataloguePage(cdb, { region: 'eu', currency: 'EUR' }, { sort: 'band' }, { pageSize: 48 });
		const { query, params } = lastStatement!;
		// the plan the app's pool runs: a generic one (createDb's genericPlans), for the statement as sent
		const literal = (v: unknown) => (typeof v === 'number' ? String(v) : `'${String(v).replace(/'/g, "''")}'`);
		const plan = await h.sql.begin(async (tx) => {
			await tx.unsafe('set local plan_cache_mode = force_generic_plan');
			await tx.unsafe(`prepare sg_catalogue_page as ${query}`);
			const rows = await tx.unsafe(`explain execute sg_catalogue_page(${params.map(literal).join(', ')})`);
			await tx.unsafe('deallocate sg_catalogue_page');
			return rows.map((r) => String(r['QUERY PLAN'])).join('\n');
		});
		// the page's ids: band, score and price come in the index's order; only ties are sorted, by name
		const ids = plan.slice(plan.indexOf('Incremental Sort'));
		expect(ids).toMatch(/Presorted Key: [\w.]*band_rank, [\w.]*score, [\w.]*best_eur/);
		expect(ids).toContain('converter_card_band_idx');
	}, 300_000);

	it("a query built once (preparedFor) reads what its own handle sees: the pool's, a transaction's", async () => {
		const [c] = await cdb.select({ id: schema.converters.id }).from(schema.converters).limit(1);
		const committed = (await revisionsFor(cdb, [c.id])).map((r) => r.notes); // builds the pool's query
		expect(committed.length).toBeGreaterThan(0);
		let inside: Array<string | null> = [];
		let fromPool: Array<string | null> = [];
		await cdb
			.transaction(async (tx) => {
				await tx
					.update(schema.revisions)
					.set({ notes: 'written inside' })
					.where(eq(schema.revisions.converterId, c.id));
				inside = (await revisionsFor(tx, [c.id])).map((r) => r.notes);
				// the pool's query runs on another connection: it reads only what is committed
				fromPool = (await revisionsFor(cdb, [c.id])).map((r) => r.notes);
				tx.rollback();
			})
			.catch((e: unknown) => {
				if (!(e instanceof TransactionRollbackError)) throw e;
			});
		expect(inside).toEqual(committed.map(() => 'written inside'));
		expect(fromPool).toEqual(committed);
		expect((await revisionsFor(cdb, [c.id])).map((r) => r.notes)).toEqual(committed);
	});

	/** The catalogue rules applied to entries built straight from the tables (no cards). */
	async function direct(region: Region, currency: string): Promise<CatalogueEntry[]> {
		const rows = await h.db
			.select()
			.from(schema.converters)
			.where(dsql`${schema.converters.retiredAt} is null`);
		const [revs, offers, rates] = await Promise.all([
			revisionsFor(h.db, 'all'),
			currentOffers(h.db, undefined, region),
			loadRates(h.db)
		]);
		return buildEntries(rows, revs, offers, { region, currency }, rates);
	}

	const filters: Array<[Region, string, CatalogueFilter]> = [
		['eu', 'EUR', { sort: 'band' }],
		['na', 'GBP', { sort: 'price', priceMin: 1000, priceMax: 1300 }],
		['jp', 'EUR', { sort: 'band', inStock: true, minBand: 'fair', audio: true }],
		['au', 'AUD', { sort: 'name', power: 'barrel' }]
	];

	it.each(filters)(
		'finds and orders what the catalogue rules find for %s in %s (%j)',
		async (region, currency, f) => {
			const expected = filterCatalogue(await direct(region, currency), f);
			const got = await loadCataloguePage(h.db, { region, currency }, f, { pageSize: 5000 });
			expect(got.matching).toBe(expected.length);
			expect(got.entries.map((e) => e.slug).sort()).toEqual(expected.map((e) => e.slug).sort());
			const want = new Map(expected.map((e) => [e.slug, e]));
			for (const e of got.entries) {
				const x = want.get(e.slug)!;
				expect({
					band: e.bestBand,
					score: e.bestScore,
					best: e.best?.listingId ?? null,
					shown: e.best?.displayMinor ?? null,
					stock: e.inStockShops
				}).toEqual({
					band: x.bestBand,
					score: x.bestScore,
					best: x.best?.listingId ?? null,
					shown: x.best?.displayMinor ?? null,
					stock: x.inStockShops
				});
			}
			// SQL order never contradicts the rules' order (ties may fall either way).
			for (let i = 1; i < got.entries.length; i++) {
				const a = got.entries[i - 1];
				const b = got.entries[i];
				if (f.sort === 'band') expect(bandRank(a.bestBand) <= bandRank(b.bestBand)).toBe(true);
				if (f.sort === 'price')
					expect((a.best?.displayMinor ?? Infinity) <= (b.best?.displayMinor ?? Infinity) + 1).toBe(true);
				if (f.sort === 'name')
					expect(`${a.brand} ${a.model}`.localeCompare(`${b.brand} ${b.model}`, 'en') <= 0).toBe(true);
			}
		},
		120_000
	);

	it("reads the best offer's last-checked time fresh, though a poll that changes nothing leaves the card alone", async () => {
		const view = { region: 'eu' as Region, currency: 'EUR' };
		const [box] = await h.db.select().from(schema.converters).where(eq(schema.converters.slug, 'bench-box-11'));
		const [entry] = await loadEntries(h.db, view, [box.id]);
		const at = new Date(Date.UTC(2031, 0, 2, 3, 4, 5, 678));
		await h.db
			.update(schema.listingStates)
			.set({ lastCheckedAt: at })
			.where(eq(schema.listingStates.listingId, entry.best!.listingId));

		const [fresh] = await loadEntries(h.db, view, [box.id]);
		expect(fresh.best!.lastCheckedAt).toBe(at.toISOString());
		const page = await loadCataloguePage(h.db, view, { sort: 'name' }, { pageSize: 2000 });
		const onPage = page.entries.find((e) => e.id === box.id)!;
		expect(onPage.best!.lastCheckedAt).toBe(at.toISOString());
		// other cards on the page keep their own times
		expect(page.entries.filter((e) => e.best && e.best.lastCheckedAt === at.toISOString())).toHaveLength(1);
		// a page that does not show the time skips the read: the card's own (older) time
		const quick = await loadCataloguePage(h.db, view, { sort: 'name' }, { pageSize: 2000, lastChecked: false });
		expect(quick.entries.find((e) => e.id === box.id)!.best!.lastCheckedAt).not.toBe(at.toISOString());
	});

	describe('stored API items', () => {
		// The reference: the list as the API built it before items were stored, entries through apiConverter.
		const reference = async (view: { region: Region; currency: string }, f: CatalogueFilter, page = 1) =>
			(await loadCataloguePage(h.db, view, f, { page, pageSize: 40 })).entries.map((e) =>
				JSON.stringify(apiConverter(e))
			);
		const stored = async (view: { region: Region; currency: string }, f: CatalogueFilter, page = 1) =>
			(await loadApiCataloguePage(h.db, view, f, { page, pageSize: 40 })).items;

		it.each([
			['eu', 'EUR', { sort: 'name' }, 1],
			['na', 'USD', { sort: 'name' }, 2],
			['eu', 'EUR', { sort: 'band', inStock: true }, 1],
			// not the region's currency: built from the entries
			['eu', 'GBP', { sort: 'name' }, 1],
			['au', 'EUR', { sort: 'price' }, 2]
		] as Array<[Region, string, CatalogueFilter, number]>)(
			'are byte for byte what apiConverter makes of the entries (%s in %s, %j, page %i)',
			async (region, currency, f, page) => {
				const want = await reference({ region, currency }, f, page);
				expect(want.length).toBeGreaterThan(0);
				expect(await stored({ region, currency }, f, page)).toEqual(want);
			}
		);

		it("carry the best offer's fresh last-checked time, and the card's own when none is read", async () => {
			const view = { region: 'eu' as Region, currency: 'EUR' };
			const listed = await loadCataloguePage(h.db, view, { sort: 'name' }, { pageSize: 40 });
			const entry = listed.entries.filter((e) => e.best)[2];
			const at = new Date(Date.UTC(2032, 5, 6, 7, 8, 9, 10));
			await h.db
				.update(schema.listingStates)
				.set({ lastCheckedAt: at })
				.where(eq(schema.listingStates.listingId, entry.best!.listingId));
			const items = await stored(view, { sort: 'name' });
			const item = items.map((t) => JSON.parse(t)).find((x) => x.slug === entry.slug);
			expect(item.bestOffer.lastCheckedAt).toBe(at.toISOString());
			expect(items).toEqual(await reference(view, { sort: 'name' }));

			// a card whose best listing has no state row: the time stored with the card
			const text = apiItemText({ ...entry, best: { ...entry.best!, lastCheckedAt: '2030-01-01T00:00:00.000Z' } });
			expect(text).toContain('\u0001"2030-01-01T00:00:00.000Z"\u0001');
			expect(JSON.parse(text.replaceAll('\u0001', '')).bestOffer.lastCheckedAt).toBe('2030-01-01T00:00:00.000Z');
		});

		it('a name with the bracket character in it stays in the text as an escape, never as the bracket', async () => {
			const listed = await loadCataloguePage(
				h.db,
				{ region: 'eu', currency: 'EUR' },
				{ sort: 'name' },
				{ pageSize: 40 }
			);
			const entry = listed.entries.find((e) => e.best)!;
			const text = apiItemText({ ...entry, model: 'odd\u0001name', best: { ...entry.best!, shopName: '\u0001' } });
			expect(text.split('\u0001')).toHaveLength(3);
			expect(JSON.parse(text.replaceAll('\u0001', '')).model).toBe('odd\u0001name');
		});

		it('a card built by code of another item shape is listed from its entry until rebuilt', async () => {
			const view = { region: 'eu' as Region, currency: 'EUR' };
			const { slug } = JSON.parse((await reference(view, { sort: 'name' }))[5]);
			await h.sql`update converter_card set api_shape = 0, api_item = '{"stale":true}' where slug = ${slug}`;
			const items = await stored(view, { sort: 'name' });
			expect(items.some((t) => t.includes('"stale"'))).toBe(false);
			expect(items).toEqual(await reference(view, { sort: 'name' }));
		});
	});

	describe('stored card HTML', () => {
		// A stand-in for CatalogueCard (whose own output tests/unit/server/rendered-html.test.ts checks):
		// what matters here is which entry each card was rendered from.
		const cardOf = (e: CatalogueEntry) =>
			`<li>${e.slug} ${e.best?.displayMinor ?? '-'} ${e.best?.displayCurrency ?? ''} ${e.revisions.map((r) => r.band).join(',')}</li>`;
		const renderer = (build: string | null) => {
			const rendered: string[] = [];
			return { build, rendered, render: (e: CatalogueEntry) => (rendered.push(e.slug), cardOf(e)) };
		};
		const f: CatalogueFilter = { sort: 'name' };
		const eur = { region: 'eu' as Region, currency: 'EUR' };
		// The reference: the same page's entries, rendered now.
		const reference = async (view: { region: Region; currency: string }, page = 1) =>
			(await loadCataloguePage(h.db, view, f, { page, pageSize: 20 })).entries.map(cardOf);
		const cards = (view: { region: Region; currency: string }, r: ReturnType<typeof renderer>, page = 1) =>
			loadCatalogueHtmlPage(h.db, view, f, { page, pageSize: 20 }, r);
		const storedHtml = async (slug: string, region: Region = 'eu') =>
			(
				await h.sql<{ card_html: string | null; card_html_build: string | null }[]>`
					select card_html, card_html_build from converter_card where slug = ${slug} and region = ${region}`
			)[0];

		it('are rendered once per build, then read as stored, in the order of the entries', async () => {
			const first = renderer('build-1');
			const page = await cards(eur, first, 2);
			expect(page.cards).toEqual(await reference(eur, 2));
			expect(first.rendered).toHaveLength(20);
			expect(await storedHtml(first.rendered[3])).toEqual({ card_html: page.cards[3], card_html_build: 'build-1' });

			const again = renderer('build-1');
			expect((await cards(eur, again, 2)).cards).toEqual(page.cards);
			expect(again.rendered).toEqual([]);

			// another build may render cards differently: it renders them afresh
			const next = renderer('build-2');
			expect((await cards(eur, next, 2)).cards).toEqual(page.cards);
			expect(next.rendered).toHaveLength(20);
		});

		it('a rebuilt card is rendered again; the others stay as stored', async () => {
			await cards(eur, renderer('build-3'));
			const [entry] = (await loadCataloguePage(h.db, eur, f, { pageSize: 20 })).entries.filter((e) => e.best).slice(4);
			await h.db.transaction(async (tx) => {
				await tx
					.update(schema.listingStates)
					.set({ currentPriceMinor: entry.best!.priceMinor! + 100 })
					.where(eq(schema.listingStates.listingId, entry.best!.listingId));
				await refreshListingCards(tx, [entry.best!.listingId]);
			});
			expect(await storedHtml(entry.slug)).toEqual({ card_html: null, card_html_build: null });

			const r = renderer('build-3');
			const page = await cards(eur, r);
			expect(r.rendered).toEqual([entry.slug]);
			expect(page.cards).toEqual(await reference(eur));
			expect(page.cards.find((c) => c.startsWith(`<li>${entry.slug} `))).not.toBe(cardOf(entry));
		});

		it("in a currency not the region's, cards are rendered per request and nothing is stored", async () => {
			await cards(eur, renderer('build-4'));
			const gbp = { region: 'eu' as Region, currency: 'GBP' };
			for (let i = 0; i < 2; i++) {
				const r = renderer('build-4');
				const page = await cards(gbp, r);
				expect(page.cards).toEqual(await reference(gbp));
				expect(page.cards.join('')).toContain(' GBP ');
				expect(r.rendered).toHaveLength(20);
			}
			const [first] = (await loadCataloguePage(h.db, eur, f, { pageSize: 20 })).entries;
			expect((await storedHtml(first.slug))?.card_html).toBe(cardOf(first));
		});

		it('without a build name (dev) nothing is stored', async () => {
			const before = await h.sql`select count(*)::int as n from converter_card where card_html is not null`;
			const r = renderer(null);
			expect((await cards({ region: 'jp', currency: 'JPY' }, r)).cards).toEqual(
				await reference({ region: 'jp', currency: 'JPY' })
			);
			expect(r.rendered).toHaveLength(20);
			expect(await h.sql`select count(*)::int as n from converter_card where card_html is not null`).toEqual(before);
		});

		it('a render is never stored over a card rebuilt since its entry was read', async () => {
			const [e] = (await loadCataloguePage(h.db, eur, f, { pageSize: 20 })).entries.slice(7);
			const row = async () =>
				(
					await h.sql<{ xmin: string }[]>`
						select xmin::text as xmin from converter_card where slug = ${e.slug} and region = 'eu'`
				)[0].xmin;
			const seen = await row();
			await h.db.transaction((tx) => refreshCards(tx, [e.id])); // a new version of the row
			await storeCardHtml(h.db, 'eu', 'build-5', [{ id: e.id, seen, html: '<li>stale</li>' }]);
			expect(await storedHtml(e.slug)).toEqual({ card_html: null, card_html_build: null });

			await storeCardHtml(h.db, 'eu', 'build-5', [{ id: e.id, seen: await row(), html: '<li>fresh</li>' }]);
			expect(await storedHtml(e.slug)).toEqual({ card_html: '<li>fresh</li>', card_html_build: 'build-5' });
		});
	});

	describe('the region card count (migration 0017)', () => {
		// The reference: the cards each region has, counted now.
		const counted = async () =>
			Object.fromEntries(
				REGION_CODES.map((r) => [r, 0]).concat(
					(
						await h.sql<{ region: Region; n: number }[]>`
							select region, count(*)::int as n from converter_card group by region`
					).map((r) => [r.region, r.n])
				)
			);
		const kept = async (db: postgres.Sql | postgres.TransactionSql = h.sql) =>
			Object.fromEntries(
				REGION_CODES.map((r) => [r, 0]).concat(
					(await db<{ region: Region; cards: number }[]>`select region, cards from region_card_count`).map((r) => [
						r.region,
						r.cards
					])
				)
			);
		const newConverter = async (slug: string) => {
			const [c] = await h.db
				.insert(schema.converters)
				.values({ slug, brand: 'Countwell', model: slug })
				.returning({ id: schema.converters.id });
			await h.db.transaction((tx) => refreshCards(tx, [c.id]));
			return c.id;
		};

		it('stays equal to the cards each region has through new, retired and deleted converters and rebuilds', async () => {
			await loadCataloguePage(h.db, { region: 'eu', currency: 'EUR' }, {}, { pageSize: 1 }); // builds dirty cards
			expect(await kept()).toEqual(await counted());
			const before = await counted();

			const added = await newConverter('count-one');
			const plusOne = Object.fromEntries(REGION_CODES.map((r) => [r, before[r] + 1]));
			expect(await counted()).toEqual(plusOne);
			expect(await kept()).toEqual(plusOne);

			// A rebuild of every card updates them all and adds none.
			await h.db.transaction((tx) => refreshCards(tx, 'all'));
			expect(await kept()).toEqual(plusOne);

			// Retired: the rebuild deletes its cards.
			await h.db.update(schema.converters).set({ retiredAt: new Date() }).where(eq(schema.converters.id, added));
			await h.db.transaction((tx) => refreshCards(tx, [added]));
			expect(await kept()).toEqual(before);

			// Deleted: its cards go with it (the foreign key's cascade).
			const gone = await newConverter('count-two');
			expect(await kept()).toEqual(plusOne);
			await h.db.delete(schema.converters).where(eq(schema.converters.id, gone));
			expect(await kept()).toEqual(before);
			expect(await counted()).toEqual(before);

			// Truncated (rolled back here): every region counts none.
			const inside = await h.sql
				.begin(async (tx) => {
					await tx`truncate converter_card`;
					const seen = await kept(tx);
					throw Object.assign(new Error('roll back'), { seen });
				})
				.catch((e: { seen?: Record<string, number> }) => e.seen);
			expect(inside).toEqual(Object.fromEntries(REGION_CODES.map((r) => [r, 0])));
			expect(await kept()).toEqual(before);
		}, 60_000);

		it('two writers adding converters at once both commit, and both are counted', async () => {
			const before = await kept();
			const ids = await Promise.all([newConverter('count-three'), newConverter('count-four')]);
			expect(await kept()).toEqual(Object.fromEntries(REGION_CODES.map((r) => [r, before[r] + 2])));
			expect(await kept()).toEqual(await counted());
			await h.db.delete(schema.converters).where(inArray(schema.converters.id, ids));
			expect(await kept()).toEqual(before);
		});

		it("a card's region cannot change, so no update can put the counts wrong", async () => {
			const [card] = await h.sql`select converter_id from converter_card where region = 'eu' limit 1`;
			await expect(
				h.sql`update converter_card set region = 'jp' where region = 'eu' and converter_id = ${card.converter_id}`
			).rejects.toThrow(/region cannot change/);
		});

		it('an unfiltered page takes its totals from the count; a narrowing filter counts its matches', async () => {
			const eur = { region: 'eu' as Region, currency: 'EUR' };
			const all = (await counted()).eu;
			const plain = await loadCataloguePage(h.db, eur, { sort: 'band' }, { pageSize: 48 });
			expect(plain).toMatchObject({ total: all, matching: all, pages: Math.ceil(all / 48) });

			// The reference for a narrowed page: the catalogue rules ($lib/finder) over every entry.
			const narrow: CatalogueFilter = { audio: true, minBand: 'close' };
			const everyEntry = (await loadCataloguePage(h.db, eur, {}, { pageSize: 100_000 })).entries;
			const expected = filterCatalogue(everyEntry, narrow).length;

			// Within a transaction that sets the count to a figure no count of rows gives, and rolls back:
			// the unfiltered page shows that figure, the narrowed one still counts its own matches.
			const seen = await h.db
				.transaction(async (tx) => {
					await tx.update(schema.regionCardCounts).set({ cards: 9999 }).where(eq(schema.regionCardCounts.region, 'eu'));
					const unfiltered = await loadCataloguePage(tx, eur, {}, { pageSize: 48 });
					const narrowed = await loadCataloguePage(tx, eur, narrow, { pageSize: 48 });
					throw Object.assign(new TransactionRollbackError(), { unfiltered, narrowed });
				})
				.catch(
					(e: { unfiltered?: { total: number; matching: number }; narrowed?: { total: number; matching: number } }) => e
				);
			expect(seen.unfiltered).toMatchObject({ total: 9999, matching: 9999 });
			expect(seen.narrowed).toMatchObject({ total: 9999, matching: expected });
			expect((await kept()).eu).toBe(all);
		});
	});

	it('shows a new price, a new grade and a new exchange rate on the next read', async () => {
		const view = { region: 'eu' as Region, currency: 'EUR' };
		const [box] = await h.db.select().from(schema.converters).where(eq(schema.converters.slug, 'bench-box-7'));
		const [before] = await loadEntries(h.db, view, [box.id]);
		expect(before.best).not.toBeNull();

		// A price drop written the poller's way: state change and card refresh in one transaction.
		await h.db.transaction(async (tx) => {
			await tx
				.update(schema.listingStates)
				.set({ currentPriceMinor: 1, currentStock: 'in_stock' })
				.where(eq(schema.listingStates.listingId, before.best!.listingId));
			await refreshListingCards(tx, [before.best!.listingId]);
		});
		const [cheap] = await loadEntries(h.db, view, [box.id]);
		expect(cheap.best).toMatchObject({ listingId: before.best!.listingId, priceMinor: 1 });

		// A grade: the revision loses its runs (as if superseded) and is regraded to none.
		const [rev] = await h.db.select().from(schema.revisions).where(eq(schema.revisions.converterId, box.id));
		await h.db.transaction(async (tx) => {
			await tx.update(schema.benchRuns).set({ status: 'superseded' }).where(eq(schema.benchRuns.revisionId, rev.id));
			await regradeRevision(tx, rev.id);
		});
		const [ungraded] = await loadEntries(h.db, view, [box.id]);
		expect(ungraded.revisions.find((r) => r.id === rev.id)!.band).toBeNull();

		// An exchange rate written by a plain statement (no refresh call): the next read catches it.
		const gbpListing = (await currentOffers(h.db, [box.id])).find((o) => o.currency === 'GBP' && o.priceMinor != null);
		if (gbpListing) {
			const shown = async () =>
				(await loadConverterDetail(h.db, 'bench-box-7', { region: 'uk', currency: 'EUR' }))!.listings.find(
					(o) => o.listingId === gbpListing.listingId
				)!;
			const shownBefore = (await shown()).displayMinor;
			const refreshed = async () =>
				(
					await h.db
						.select({ at: schema.converterCards.refreshedAt })
						.from(schema.converterCards)
						.where(eq(schema.converterCards.converterId, box.id))
				)[0].at.getTime();
			const cardBefore = await refreshed();
			await h.db
				.insert(schema.exchangeRates)
				.values({ base: 'EUR', quote: 'GBP', day: new Date().toISOString().slice(0, 10), rate: '0.5', source: 'test' })
				.onConflictDoUpdate({
					target: [schema.exchangeRates.base, schema.exchangeRates.quote, schema.exchangeRates.day],
					set: { rate: '0.5' }
				});
			const after = await shown();
			expect(after.displayMinor).toBe(Math.round((gbpListing.priceMinor! / 100 / 0.5) * 100));
			expect(after.displayMinor).not.toBe(shownBefore);
			// Every card was rebuilt with the new rate (the rate trigger marked them all).
			expect(await refreshed()).toBeGreaterThan(cardBefore);
		}
		// A retired converter leaves the catalogue.
		await h.db.update(schema.converters).set({ retiredAt: new Date() }).where(eq(schema.converters.id, box.id));
		expect(await loadEntries(h.db, view, [box.id])).toEqual([]);
		await refreshCards(h.db, [box.id]);
		const cards = await h.db
			.select()
			.from(schema.converterCards)
			.where(and(eq(schema.converterCards.converterId, box.id)));
		expect(cards).toEqual([]);
		expect(REGION_CODES).toContain(view.region);
	}, 120_000);
});
