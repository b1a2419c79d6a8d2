/**
 * History queries and their API routes on a real database: a small scripted history (observations
 * inserted directly) gives hand-computed figures; best offers per region reuse the pricing helpers;
 * the health view counts what the poller recorded. Figures' definitions: queries/history.ts.
 * HTTP status codes per RFC 9110 (400, 401, 403, 404). Exchange rates are the demo's (invented).
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { eq } from 'drizzle-orm';
import { converters, listings, listingStates, observations, shops } from '../../src/lib/server/db/schema';
import {
	bestOffersByRegion,
	downsampleSteps,
	listingFigures,
	listing90DayFigures,
	listingHistory,
	windowFigures,
	type ChangePoint
} from '../../src/lib/server/queries/history';
import { listingOutlooks, shopHealth } from '../../src/lib/server/queries/shops';
import { restockOutlook } from '../../src/lib/restock';
import { createWorld, setSpacing, type World } from './poller-helpers';
import { LISTINGS } from '../../src/lib/demo/scenario';

let w: World;
const DAY = 86_400_000;
const NOW = new Date('2026-03-01T00:00:00Z');
const at = (daysAgo: number) => new Date(NOW.getTime() - daysAgo * DAY);
let listingId: number;

const SCRIPT: Array<[number, number, 'in_stock' | 'out_of_stock' | 'unknown']> = [
	[100, 3000, 'in_stock'],
	[80, 2800, 'out_of_stock'],
	[60, 2800, 'in_stock'],
	[50, 2500, 'in_stock'],
	[40, 2500, 'out_of_stock'],
	[20, 2600, 'in_stock'],
	[15, 2600, 'out_of_stock'],
	[10, 2600, 'unknown'],
	[5, 2400, 'in_stock']
];

beforeAll(async () => {
	w = await createWorld('sg_it_poller_figures');
	await setSpacing(w.db, 0);
	listingId = await w.listingId('kanalhaus', '/artikel/vb-beam-bridge');
	await w.db.delete(observations).where(eq(observations.listingId, listingId));
	await w.db
		.insert(observations)
		.values(
			SCRIPT.map(([d, priceMinor, stock]) => ({ listingId, observedAt: at(d), priceMinor, currency: 'EUR', stock }))
		);
	await w.db
		.update(listingStates)
		.set({ currentPriceMinor: 2400, currentCurrency: 'EUR', currentStock: 'in_stock', currentSince: at(5) })
		.where(eq(listingStates.listingId, listingId));
});
afterAll(async () => {
	await w?.close();
});

describe('listing history', () => {
	it('figures over 30 and 90 days match the hand-computed values', async () => {
		const h = (await listingHistory(w.db, listingId, { range: '90d', now: NOW }))!;
		expect(h.figures.d90).toMatchObject({
			lowestMinor: 2400,
			medianMinor: 2600,
			currency: 'EUR',
			restocks: 3,
			completedSpells: 2,
			typicalRestockHours: 300
		});
		expect(h.figures.d90.buyableShare).toBeCloseTo(40 / 85, 10);
		expect(h.figures.d30).toMatchObject({
			lowestMinor: 2400,
			medianMinor: 2500,
			restocks: 2,
			completedSpells: 1,
			typicalRestockHours: 120
		});
		expect(h.figures.d30.buyableShare).toBeCloseTo(0.4, 10);
		expect(h.current).toMatchObject({ priceMinor: 2400, currency: 'EUR', stock: 'in_stock' });
		// The chart starts with the state carried in from before the range, at the range start.
		expect(h.points[0]).toMatchObject({ carried: true, priceMinor: 3000, stock: 'in_stock' });
		expect(h.points[0].at).toEqual(at(90));
		expect(h.points).toHaveLength(9);
		expect(h.totalPoints).toBe(8);
		expect(h.listing.shop.slug).toBe('kanalhaus');
	});

	it("range 'all' starts at the first change point; 30d carries the 40-days-ago state in", async () => {
		const all = (await listingHistory(w.db, listingId, { range: 'all', now: NOW }))!;
		expect(all.range.from).toEqual(at(100));
		expect(all.points).toHaveLength(9);
		const d30 = (await listingHistory(w.db, listingId, { range: '30d', now: NOW }))!;
		expect(d30.points.map((p) => p.priceMinor)).toEqual([2500, 2600, 2600, 2600, 2400]);
	});

	it("a delisted listing's figures stop at the delisting", async () => {
		await w.db
			.update(listings)
			.set({ delistedAt: at(30) })
			.where(eq(listings.id, listingId));
		const f = (await listingFigures(w.db, [listingId], NOW)).get(listingId)!;
		// The 30-day window is now days 60..30 ago: 2800 in stock 10 d, 2500 in stock 10 d, 2500 out 10 d.
		expect(f.d30).toMatchObject({
			lowestMinor: 2500,
			medianMinor: 2500,
			restocks: 1,
			completedSpells: 1,
			typicalRestockHours: 480
		});
		expect(f.d30.buyableShare).toBeCloseTo(20 / 30, 10);
		await w.db.update(listings).set({ delistedAt: null }).where(eq(listings.id, listingId));
	});

	it('a dense year is downsampled in SQL to at most the asked points, as the in-memory reference does', async () => {
		// A change every 2 hours for a year (4,380 points) on a second listing of the same world.
		const dense = await w.listingId('thamesbit', '/item/loop-rgb');
		await w.db.delete(observations).where(eq(observations.listingId, dense));
		const states = ['in_stock', 'out_of_stock', 'unknown', 'preorder'] as const;
		const year: ChangePoint[] = Array.from({ length: 4380 }, (_, i) => ({
			at: new Date(NOW.getTime() - 365 * DAY + i * 2 * 3_600_000),
			priceMinor: 2000 + ((i * 37) % 500),
			currency: 'GBP',
			stock: states[Math.floor(i / 5) % states.length]
		}));
		for (let i = 0; i < year.length; i += 1000)
			await w.db.insert(observations).values(
				year.slice(i, i + 1000).map((p) => ({
					listingId: dense,
					observedAt: p.at,
					priceMinor: p.priceMinor,
					currency: p.currency,
					stock: p.stock
				}))
			);
		for (const points of [10, 120, 300]) {
			const h = (await listingHistory(w.db, dense, { range: '1y', now: NOW, points }))!;
			expect(h.points.length).toBeLessThanOrEqual(points);
			expect(h.downsampled).toBe(true);
			expect(h.totalPoints).toBe(4380);
			// Same buckets as downsampleSteps over the in-range points (the carried point comes first on its own).
			const from = h.range.from;
			const buckets = Math.floor((points - 1) / 4);
			const width = Math.ceil((NOW.getTime() - from.getTime()) / buckets);
			const reference = downsampleSteps(
				year.filter((p) => p.at >= from),
				from,
				new Date(from.getTime() + buckets * width),
				buckets * 4
			);
			expect(h.points.slice(h.points[0]?.carried ? 1 : 0).map((p) => [+p.at, p.priceMinor, p.stock])).toEqual(
				reference.map((p) => [+p.at, p.priceMinor, p.stock])
			);
		}
		// The figures read only the points they need, and match figures over the whole year.
		const h = (await listingHistory(w.db, dense, { range: '1y', now: NOW }))!;
		expect(h.figures.d90).toEqual(windowFigures(year, new Date(NOW.getTime() - 90 * DAY), NOW));
		expect(h.figures.d30).toEqual(windowFigures(year, new Date(NOW.getTime() - 30 * DAY), NOW));
		// The converter page's figures, several listings in one statement, are the same ones.
		const many = await listingFigures(w.db, [dense, listingId], NOW);
		expect(many.get(dense)).toEqual(h.figures);
		expect(many.get(listingId)).toEqual((await listingHistory(w.db, listingId, { now: NOW }))!.figures);
		// and the page's 90-day figures alone are those same ones
		const d90 = await listing90DayFigures(w.db, [dense, listingId], NOW);
		expect(d90.get(dense)).toEqual(h.figures.d90);
		expect(d90.get(listingId)).toEqual(many.get(listingId)!.d90);

		// Restock outlooks read only the stock turns (SQL) and come out as over the whole year in memory,
		// with price-only changes and 'unknown' readings left out; a delisting ends the history.
		const outlook = (await listingOutlooks(w.db, [dense, listingId], NOW)).get(dense)!;
		expect(outlook.restock.spells).toBeGreaterThan(100);
		expect(outlook).toEqual(restockOutlook(year, NOW));
		await w.db
			.update(listings)
			.set({ delistedAt: at(30) })
			.where(eq(listings.id, dense));
		expect((await listingOutlooks(w.db, [dense], NOW)).get(dense)).toEqual(restockOutlook(year, at(30)));
		await w.db.update(listings).set({ delistedAt: null }).where(eq(listings.id, dense));
	});

	it('unknown listing: null', async () => {
		expect(await listingHistory(w.db, 999_999)).toBeNull();
	});
});

describe('best offer per region', () => {
	it('picks the cheapest buyable offer each region can get, in its currency', async () => {
		const [conv] = await w.db.select().from(converters).where(eq(converters.slug, 'vantacove-beam-bridge'));
		const best = (await bestOffersByRegion(w.db, [conv.id], NOW)).get(conv.id)!;
		// kanalhaus ships to the EU and the UK at 24.00 EUR now (the scripted state); kumo-parts to Japan and Australia.
		expect(best.eu).toMatchObject({
			shopSlug: 'kanalhaus',
			priceMinor: 2400,
			displayMinor: 2400,
			displayCurrency: 'EUR'
		});
		expect(best.jp).toMatchObject({
			shopSlug: 'kumo-parts',
			priceMinor: 3480,
			displayMinor: 3480,
			displayCurrency: 'JPY'
		});
		// 3480 JPY / 162 JPY per EUR x 1.65 AUD per EUR = 35.44 AUD (demo rates).
		expect(best.au).toMatchObject({ shopSlug: 'kumo-parts', displayMinor: 3544, displayCurrency: 'AUD' });
		// 24.00 EUR x 0.85 = 20.40 GBP.
		expect(best.uk).toMatchObject({ shopSlug: 'kanalhaus', displayMinor: 2040, displayCurrency: 'GBP' });
		// The only North American listing is out of stock.
		expect(best.na).toBeNull();
	});
});

describe('shop health', () => {
	it('counts outcomes per shop and lists the listings failing now', async () => {
		w.clock.set(NOW);
		await w.makeDue();
		await w.control('POST', '/fault', { shop: 'thamesbit', path: '/item/loop-rgb', kind: 'http500' });
		await w.poller().drain();
		const health = await shopHealth(w.db, { now: NOW });
		expect(health.from).toBe('2026-02-23');
		expect(health.to).toBe('2026-03-01');
		const t = health.shops.find((s) => s.shop.slug === 'thamesbit')!;
		expect(t.polls).toBe(LISTINGS.filter((l) => l.shop === 'thamesbit').length); // every demo listing there, polled once
		expect(t.failures).toBe(1);
		expect(t.counts.http_5xx).toBe(1);
		expect(t.lastError).toMatchObject({ outcome: 'http_5xx', detail: 'HTTP 500' });
		expect(t.failingNow).toEqual([
			expect.objectContaining({ lastOutcome: 'http_5xx', consecutiveFailures: 1, lastError: 'HTTP 500' })
		]);
		const k = health.shops.find((s) => s.shop.slug === 'kanalhaus')!;
		expect(k.failures).toBe(0);
		expect(k.failingNow).toEqual([]);
		expect(health.shops.reduce((n, s) => n + s.polls, 0)).toBe(LISTINGS.length);
	});
});

describe('API routes', () => {
	// The routes use the app's client ($lib/server/db, configured from $env); hand them this test's database.
	beforeAll(() => {
		vi.doMock('../../src/lib/server/db/index', () => ({ db: w.db }));
	});
	it('history: 400 for a bad id or query, 404 for an unknown listing, 200 with points', async () => {
		const { GET } = await import('../../src/routes/api/v1/listings/[id=int]/history/+server');
		const call = (id: string, qs = '') =>
			GET({
				params: { id },
				url: new URL(`http://x/api/v1/listings/${id}/history${qs}`)
			} as never) as Promise<Response>;
		expect((await call('abc')).status).toBe(400);
		const bad = await call(String(listingId), '?range=2w');
		expect(bad.status).toBe(400);
		expect((await bad.json()).detail).toMatch(/range/);
		expect((await call(String(listingId), '?points=5')).status).toBe(400);
		expect((await call('999999')).status).toBe(404);
		const ok = await call(String(listingId), '?range=all&points=10');
		expect(ok.status).toBe(200);
		const body = await ok.json();
		expect(body.points.length).toBeLessThanOrEqual(10);
		expect(body.figures.d90).toHaveProperty('medianMinor');
	});

	it('shop health: 401 signed out, 403 for a member, 200 for a curator, 400 for bad days', async () => {
		const { GET } = await import('../../src/routes/api/v1/curate/shops/health/+server');
		const call = async (role: string | null, qs = '') => {
			try {
				return (await GET({
					locals: { user: role ? { id: 'u', email: 'u@scopegrade.test', name: null, role } : null },
					url: new URL(`http://x/api/v1/curate/shops/health${qs}`)
				} as never)) as Response;
			} catch (err) {
				return { status: (err as { status: number }).status } as Response;
			}
		};
		expect((await call(null)).status).toBe(401);
		expect((await call('member')).status).toBe(403);
		expect((await call('curator', '?days=0')).status).toBe(400);
		const ok = await call('curator');
		expect(ok.status).toBe(200);
		const body = await ok.json();
		expect(body.shops).toHaveLength(5);
		expect((await w.db.select().from(shops)).length).toBe(5);
	});
});
