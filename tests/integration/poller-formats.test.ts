/**
 * The poller reads every fake shop's format into the right price, currency and stock state, and
 * stores change points only when something changed. Sources: schema.org 30.0 Offer.price /
 * priceCurrency / availability (ItemAvailability); ISO 4217 minor units (JPY 0, EUR/GBP/USD/AUD 2);
 * RFC 9110 sections 13.1.2-13.1.3 (If-None-Match / If-Modified-Since) and 15.4.5 (304).
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { LISTINGS, SHOPS } from '../../src/lib/demo/scenario';
import { listingStates, listings, observations, pollCounts } from '../../src/lib/server/db/schema';
import { createWorld, setSpacing, TEST_UA, type World } from './poller-helpers';

let w: World;

beforeAll(async () => {
	w = await createWorld('sg_it_poller_formats');
	await setSpacing(w.db, 0);
});
afterAll(async () => {
	await w?.close();
});
beforeEach(async () => {
	await w.control('POST', '/reset');
});

describe('each format reads to the right offer', () => {
	it('a first run polls every demo listing: price, currency and stock as the shops serve them', async () => {
		// Start from nothing known, so every listing's first read is a real change point.
		await w.db
			.update(listingStates)
			.set({ currentStock: 'unknown', currentPriceMinor: null, currentCurrency: null, currentSince: null });
		await w.db.delete(observations);
		const summary = await w.poller().drain();
		expect(summary.byOutcome).toEqual({ ok: LISTINGS.length });
		for (const l of LISTINGS) {
			const id = await w.listingId(l.shop, l.path);
			const st = await w.state(id);
			const shop = SHOPS.find((s) => s.slug === l.shop)!;
			expect(
				{ price: st.currentPriceMinor, currency: st.currentCurrency, stock: st.currentStock },
				`${l.shop} ${l.path}`
			).toEqual({
				price: l.priceMinor,
				currency: shop.currency,
				stock: l.stock
			});
			expect(st.lastOutcome).toBe('ok');
			expect(st.etag).toBeTruthy();
			expect(st.lastModified).toBeTruthy();
		}
		// First readings of a listing are change points, but with nothing known before they raise no stock events.
		expect((await w.db.select().from(observations)).length).toBe(LISTINGS.length);
	});

	it.each([
		['northbay-circuits', '/products/scanlet', 'jsonld', 1299, 'USD'],
		['thamesbit', '/item/loop-rgb', 'microdata', 1595, 'GBP'],
		['kanalhaus', '/artikel/vb-beam-bridge-pro', 'selectors', 123456, 'EUR'], // "1.234,56 €": locale price
		['kumo-parts', '/api/products/KP-1001', 'api', 3480, 'JPY'], // ISO 4217: JPY has no minor unit
		['wattle-and-wire', '/shop/brisling-scanlet', 'selectors', 2195, 'AUD'] // "$" read as AUD, the shop's currency
	])('%s (%s, %s) reads %s %s', async (shop, path, format, price, currency) => {
		const id = await w.listingId(shop, path);
		const [l] = await w.db.select().from(listings).where(eq(listings.id, id));
		expect(l.format).toBe(format);
		const st = await w.state(id);
		expect(st.currentPriceMinor).toBe(price);
		expect(st.currentCurrency).toBe(currency);
	});

	it('the next run sends conditional requests and a 304 changes nothing but last_checked_at', async () => {
		w.clock.advance(31 * 60_000);
		await w.markRequests();
		const before = (await w.db.select().from(observations)).length;
		const summary = await w.poller().drain();
		expect(summary.byOutcome).toEqual({ not_modified: LISTINGS.length });
		const reqs = (await w.requests()).filter((r) => r.path !== '/robots.txt');
		expect(reqs).toHaveLength(LISTINGS.length);
		for (const r of reqs) {
			expect(r.userAgent).toBe(TEST_UA);
			expect(r.ifNoneMatch).toBeTruthy();
			expect(r.status).toBe(304);
		}
		expect((await w.db.select().from(observations)).length).toBe(before);
		const id = await w.listingId('thamesbit', '/item/loop-rgb');
		const st = await w.state(id);
		expect(st.lastCheckedAt).toEqual(w.clock.now());
		expect(st.lastOutcome).toBe('not_modified');
		const counts = await w.db.select().from(pollCounts);
		expect(counts.reduce((n, c) => n + (c.outcome === 'not_modified' ? c.count : 0), 0)).toBe(LISTINGS.length);
	});
});
