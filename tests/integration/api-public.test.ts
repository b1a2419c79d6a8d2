/**
 * The public guide's query modules against a fresh, seeded database: catalogue filters give
 * exactly the demo converters they should, details carry the engine's reports, guides flag
 * re-grades and unbuyable picks, teardown reports give revision odds, exports are complete.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { seedDemo } from '../../src/lib/server/db/seed';
import { converters, guidePicks, guides, revisions, shops, teardownReports } from '../../src/lib/server/db/schema';
import {
	exportCatalogue,
	exportReadings,
	listGuides,
	loadCatalogue,
	loadConverterDetail,
	loadGuide,
	loadRestocks,
	loadRevision
} from '../../src/lib/server/queries/public';
import { filterCatalogue, rankFinder } from '../../src/lib/finder';
import { CONVERTERS, DEMO_GUIDE, LISTINGS, TEARDOWNS, TESTERS, TESTER_REVISIONS } from '../../src/lib/demo/scenario';
import { freshDatabase } from './helpers/db';

describe('public guide queries', () => {
	let h: Awaited<ReturnType<typeof freshDatabase>>;
	const now = new Date('2026-11-30T12:00:00Z');

	beforeAll(async () => {
		h = await freshDatabase('sg_it_public');
		await seedDemo(h.db, { shopsPort: 4410, now });
	}, 180_000);
	afterAll(async () => h?.close());

	it('lists every demo converter with every revision and a regional best price', async () => {
		const all = await loadCatalogue(h.db, { region: 'eu', currency: 'EUR' });
		expect(all.map((c) => c.slug).sort()).toEqual(CONVERTERS.map((c) => c.slug).sort());
		const scanlet = all.find((c) => c.slug === 'brisling-scanlet')!;
		expect(scanlet.revisions.map((r) => `${r.code}:${r.band}`)).toEqual(['A:close', 'B:failing']);
		// EU: Kanalhaus 11.90 EUR in stock is the cheapest buyable offer (scenario LISTINGS).
		expect(scanlet.best).toMatchObject({
			shopSlug: 'kanalhaus',
			displayMinor: 1190,
			displayCurrency: 'EUR',
			stock: 'in_stock'
		});
	});

	it('"in stock, Close or better, EU, with audio" gives exactly the matching demo converters', async () => {
		// From the scenario: EU is served by Kanalhaus (EU) and Thamesbit (UK, ships to the EU).
		// In stock there with audio: Beam Bridge (Exact), Scanlet (rev A Close but no longer in
		// shops since 2025-08-31; rev B, what shops send now, Failing), Loop RGB (Poor), Beam
		// Bridge Pro (Fair; in stock at Thamesbit), RGB Porter (A Poor and B Close, both shipping;
		// 21.50 EUR at Kanalhaus), Component Kit (Fair). Close or better on what ships today: two.
		const all = await loadCatalogue(h.db, { region: 'eu', currency: 'EUR' });
		const hit = filterCatalogue(all, { inStock: true, minBand: 'close', audio: true, sort: 'band' });
		expect(hit.map((c) => c.slug)).toEqual(['vantacove-beam-bridge', 'halvecraft-rgb-porter']);
		const ranked = rankFinder(all, {
			region: 'eu',
			inStockNow: true,
			minBand: 'close',
			needsAudio: true,
			budgetMinor: 2500
		});
		expect(ranked.map((r) => r.entry.slug)).toEqual(['vantacove-beam-bridge', 'halvecraft-rgb-porter']);
		expect(ranked[0].explanation).toBe('Exact band; in stock at 1 shop in your region; lowest 22.90 EUR');
		// Under 20 EUR nothing that ships today is Close or better.
		expect(
			rankFinder(all, { region: 'eu', inStockNow: true, minBand: 'close', needsAudio: true, budgetMinor: 2000 })
		).toEqual([]);
	});

	it('prices in another currency through the stored rates', async () => {
		const all = await loadCatalogue(h.db, { region: 'uk', currency: 'GBP' });
		const loop = all.find((c) => c.slug === 'tessaloop-loop-rgb')!;
		expect(loop.best).toMatchObject({ shopSlug: 'thamesbit', priceMinor: 1595, currency: 'GBP', displayMinor: 1595 });
		const jp = await loadCatalogue(h.db, { region: 'jp', currency: 'EUR' });
		const mini = jp.find((c) => c.slug === 'quillfen-q-cast-mini')!;
		// 1280 JPY at 162 JPY per EUR (DEMO_RATES_PER_EUR) = 7.90 EUR.
		expect(mini.best).toMatchObject({ currency: 'JPY', displayMinor: 790, displayCurrency: 'EUR' });
	});

	it('loads a converter with its runs, stored reports and every listing', async () => {
		const d = (await loadConverterDetail(h.db, 'brisling-scanlet', { region: 'eu', currency: 'EUR' }))!;
		expect(d.revisions).toHaveLength(2);
		const b = d.revisions.find((r) => r.code === 'B')!;
		expect(b.runsDetail).toHaveLength(2);
		expect(b.medianRun).not.toBeNull();
		expect(b.runsDetail[b.medianRun!].report.band).toBe('failing');
		expect(b.runsDetail[0].report.findings.map((f) => f.code)).toContain('shadows-dark');
		expect(b.runsDetail[0].input.steps).toHaveLength(11);
		expect(d.listings).toHaveLength(LISTINGS.filter((l) => l.converter === 'brisling-scanlet').length);
		expect(await loadConverterDetail(h.db, 'no-such-box', { region: 'eu', currency: 'EUR' })).toBeNull();
		const rev = (await loadRevision(h.db, b.id))!;
		expect(rev.converter.slug).toBe('brisling-scanlet');
		expect(rev.revision.runsDetail).toHaveLength(2);
	});

	it('estimates revision odds from verified teardown reports only', async () => {
		// Seeded (scenario TEARDOWNS): Scanlet at Kanalhaus verified A, A, B; add one pending B.
		const [conv] = await h.db.select().from(converters).where(eq(converters.slug, 'brisling-scanlet'));
		const revs = await h.db.select().from(revisions).where(eq(revisions.converterId, conv.id));
		const [shop] = await h.db.select().from(shops).where(eq(shops.slug, 'kanalhaus'));
		const b = revs.find((r) => r.code === 'B')!;
		await h.db.insert(teardownReports).values({
			converterId: conv.id,
			revisionId: b.id,
			shopId: shop.id,
			purchaseMonth: '2026-09-01',
			status: 'pending'
		});
		const d = (await loadConverterDetail(h.db, 'brisling-scanlet', { region: 'eu', currency: 'EUR' }))!;
		const seeded = TEARDOWNS.filter((t) => t.converter === 'brisling-scanlet');
		expect(d.teardowns).toHaveLength(seeded.length);
		// every shop with three or more verified reports gets odds
		expect(d.odds.map((o) => o.shopSlug).sort()).toEqual(['kanalhaus', 'northbay-circuits', 'wattle-and-wire']);
		const kanal = d.odds.find((o) => o.shopSlug === 'kanalhaus')!;
		const odds = Object.fromEntries(kanal.revisions.map((r) => [r.code, r]));
		expect(kanal.reports).toBe(3);
		expect(odds.B.hits).toBe(1);
		// Beta(1 + 1, 1 + 2) has mean 2/5; A: Beta(1 + 2, 1 + 1), mean 3/5.
		expect(odds.B.posterior.mean).toBeCloseTo(2 / 5, 12);
		expect(odds.A.posterior.mean).toBeCloseTo(3 / 5, 12);
	});

	it('flags guide picks that were re-graded or cannot be bought', async () => {
		// the demo guide is there from the seed
		expect((await listGuides(h.db)).map((x) => x.slug)).toEqual([DEMO_GUIDE.slug]);
		const [g] = await h.db
			.insert(guides)
			.values({
				slug: 'first-box',
				title: 'A first box',
				status: 'published',
				publishedAt: now,
				bodyMarkdown: '## Why\n\nBecause.'
			})
			.returning();
		await h.db.insert(guides).values({ slug: 'draft-one', title: 'Draft', status: 'draft' });
		const ids = Object.fromEntries((await h.db.select().from(converters)).map((c) => [c.slug, c.id]));
		await h.db.insert(guidePicks).values([
			{ guideId: g.id, converterId: ids['brisling-scanlet'], position: 0, bandAtPick: 'exact' },
			{ guideId: g.id, converterId: ids['vantacove-beam-bridge'], position: 1, bandAtPick: 'exact' }
		]);
		const list = await listGuides(h.db);
		expect(list.map((x) => x.slug).sort()).toEqual([DEMO_GUIDE.slug, 'first-box'].sort());
		expect(list.find((x) => x.slug === 'first-box')!.picks).toBe(2);
		const guide = (await loadGuide(h.db, 'first-box', { region: 'na', currency: 'USD' }))!;
		const [scanlet, bridge] = guide.picks;
		expect(scanlet).toMatchObject({ regraded: true, unbuyable: false });
		// Beam Bridge in North America: only Northbay Circuits, sold out (scenario LISTINGS).
		expect(bridge).toMatchObject({ regraded: false, unbuyable: true });
		expect(await loadGuide(h.db, 'draft-one', { region: 'na', currency: 'USD' })).toBeNull();
	});

	it("lists restocks newest first with the converter's lead band", async () => {
		const restocks = await loadRestocks(h.db, 500);
		expect(restocks.length).toBeGreaterThan(0);
		expect(restocks.every((r, i) => i === 0 || restocks[i - 1].at >= r.at)).toBe(true);
		const scanlet = restocks.find((r) => r.converterSlug === 'brisling-scanlet');
		expect(scanlet?.band, 'the band of the revision shops send now').toBe('failing');
	});

	it('exports one catalogue row per revision and 11 readings per accepted run', async () => {
		const cat = await exportCatalogue(h.db);
		expect(cat).toHaveLength(CONVERTERS.reduce((n, c) => n + c.revisions.length, 0));
		const readings = await exportReadings(h.db);
		const runs =
			CONVERTERS.reduce((n, c) => n + c.revisions.reduce((m, r) => m + r.runs, 0), 0) +
			TESTERS.length * TESTER_REVISIONS.length;
		expect(readings).toHaveLength(runs * 11);
	});
});
