/**
 * The fake shops end to end: each shop's page read back through extractOffer, and the control
 * endpoint's clock, listing changes and faults. Sources for the HTTP behaviour checked here:
 * RFC 9110 (HTTP Semantics) section 13.1.2 If-None-Match, 13.1.3 If-Modified-Since, 15.4.5 304 Not
 * Modified, 15.5.11 410 Gone, 15.4.2 301 Moved Permanently; RFC 6585 section 4 (429 Too Many
 * Requests) with RFC 9110 section 10.2.3 Retry-After; RFC 9309 sections 2.2.2 and 2.3 (robots.txt).
 * Offer contents: schema.org 30.0 Offer / ItemAvailability; ISO 4217 minor units (JPY 0).
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { LISTINGS, SHOPS } from '../../src/lib/demo/scenario';
import { extractOffer, isAllowed, parseRobots, robotsFromFetch, type ExtractResult } from '../../src/lib/feeds';
import { FAKE_SHOP_FEEDS } from '../../fixtures/shops/feeds';
import { startFakeShops, type FakeShops } from '../../fixtures/shops/server';
import type { ControlReply } from './poller-helpers';

const UA = 'ScopegradeBot/0.1 (+https://scopegrade.test/bot; test)';
let shops: FakeShops;

async function startOnFreePorts(): Promise<FakeShops> {
	let lastErr: unknown;
	for (let attempt = 0; attempt < 12; attempt++) {
		// A random block of ten ports away from the dev servers' fixed ones; retry if any is taken.
		const base = 20_000 + Math.floor(Math.random() * 4000) * 10;
		try {
			return await startFakeShops({ port: base });
		} catch (err) {
			lastErr = err;
		}
	}
	throw lastErr;
}

const control = async (method: string, path: string, body?: unknown) => {
	const res = await fetch(shops.urls.control + path, {
		method,
		headers: body === undefined ? undefined : { 'Content-Type': 'application/json' },
		body: body === undefined ? undefined : JSON.stringify(body)
	});
	return { status: res.status, json: (await res.json()) as ControlReply };
};

const get = (shop: string, path: string, init: RequestInit = {}) =>
	fetch(shops.urls.shops[shop] + path, {
		...init,
		headers: { 'User-Agent': UA, ...(init.headers as Record<string, string>) }
	});

async function read(shop: string, path: string): Promise<{ status: number; result?: ExtractResult; res: Response }> {
	const res = await get(shop, path);
	if (res.status !== 200) return { status: res.status, res };
	const feed = FAKE_SHOP_FEEDS[shop];
	const result = extractOffer({
		body: await res.text(),
		contentType: res.headers.get('content-type') ?? undefined,
		format: feed.format,
		selectors: feed.selectors,
		apiMapping: feed.apiMapping,
		expectedCurrency: feed.currency
	});
	return { status: res.status, result, res };
}

beforeAll(async () => {
	shops = await startOnFreePorts();
});
afterAll(async () => {
	await shops?.close();
});
beforeEach(async () => {
	await control('POST', '/reset');
});

describe('every shop serves its listings in its own format', () => {
	it.each(LISTINGS.map((l) => [l.shop, l.path, l]))(
		'%s %s reads back as the scenario says',
		async (shop, path, listing) => {
			const { status, result } = await read(shop as string, path as string);
			expect(status).toBe(200);
			const s = SHOPS.find((x) => x.slug === shop)!;
			expect(result).toMatchObject({
				ok: true,
				priceMinor: (listing as (typeof LISTINGS)[number]).priceMinor,
				currency: s.currency,
				stock: (listing as (typeof LISTINGS)[number]).stock,
				via: s.format
			});
		}
	);

	it('kumo-parts prices are integer yen (ISO 4217: JPY has 0 minor digits)', async () => {
		const res = await get('kumo-parts', '/api/products/KP-1001');
		expect(res.headers.get('content-type')).toMatch(/application\/json/);
		const doc = await res.json();
		expect(doc.price_yen).toBe(3480);
	});

	it('each shop has an index page linking its products', async () => {
		for (const s of SHOPS) {
			const res = await get(s.slug, '/');
			expect(res.status).toBe(200);
			const text = await res.text();
			for (const l of LISTINGS.filter((x) => x.shop === s.slug)) expect(text).toContain(l.path);
		}
	});

	it('robots.txt allows all but /cart/ by default (RFC 9309 2.2.2)', async () => {
		for (const s of SHOPS) {
			const res = await get(s.slug, '/robots.txt');
			const rules = robotsFromFetch({ status: res.status, body: await res.text() });
			expect(isAllowed(rules, UA, '/cart/')).toBe(false);
			for (const l of LISTINGS.filter((x) => x.shop === s.slug)) expect(isAllowed(rules, UA, l.path)).toBe(true);
		}
	});

	it('an unknown path is 404', async () => {
		expect((await get('thamesbit', '/item/nothing-here')).status).toBe(404);
	});
});

describe('scenario clock and scripted changes', () => {
	it('GET /state reports the clock and every listing', async () => {
		const { json } = await control('GET', '/state');
		expect(json.clock).toBe(0);
		expect(json.listings).toHaveLength(LISTINGS.length);
		expect(json.faults).toEqual([]);
	});

	it('the timeline applies as the clock moves, and winding back undoes it', async () => {
		expect((await read('northbay-circuits', '/products/beam-bridge')).result).toMatchObject({ stock: 'out_of_stock' });
		await control('POST', '/clock', { minutes: 30 });
		expect((await read('northbay-circuits', '/products/beam-bridge')).result).toMatchObject({
			ok: true,
			stock: 'in_stock'
		});
		await control('POST', '/clock', { advance: 15 });
		expect((await read('kanalhaus', '/artikel/brisling-scanlet')).result).toMatchObject({ ok: true, priceMinor: 1090 });
		await control('POST', '/clock', { minutes: 0 });
		expect((await read('kanalhaus', '/artikel/brisling-scanlet')).result).toMatchObject({ ok: true, priceMinor: 1190 });
	});

	it('a price change through POST /listing shows on the page', async () => {
		const r = await control('POST', '/listing', {
			shop: 'thamesbit',
			path: '/item/loop-rgb',
			priceMinor: 1495,
			stock: 'out_of_stock'
		});
		expect(r.status).toBe(200);
		expect((await read('thamesbit', '/item/loop-rgb')).result).toMatchObject({
			ok: true,
			priceMinor: 1495,
			currency: 'GBP',
			stock: 'out_of_stock'
		});
		// The locale-formatted shop too: 1.099,00 €.
		await control('POST', '/listing', { shop: 'kanalhaus', path: '/artikel/vb-beam-bridge', priceMinor: 109900 });
		const k = await get('kanalhaus', '/artikel/vb-beam-bridge');
		expect(await k.text()).toContain('1.099,00\u00a0€');
	});

	it('a delisting answers 410 Gone (RFC 9110 15.5.11), and 404 when scripted so', async () => {
		await control('POST', '/listing', { shop: 'kanalhaus', path: '/artikel/q-cast-mini', status: 'gone410' });
		expect((await get('kanalhaus', '/artikel/q-cast-mini')).status).toBe(410);
		await control('POST', '/listing', { shop: 'kumo-parts', path: '/api/products/KP-1002', status: 'gone404' });
		expect((await get('kumo-parts', '/api/products/KP-1002')).status).toBe(404);
		expect((await control('GET', '/state')).json.listings.find((l) => l.path === '/artikel/q-cast-mini')?.status).toBe(
			'gone410'
		);
	});

	it('a redirect answers 301 with Location, and the new path serves the product (RFC 9110 15.4.2)', async () => {
		await control('POST', '/listing', {
			shop: 'wattle-and-wire',
			path: '/shop/brisling-scanlet',
			status: 'redirect',
			redirectTo: '/shop/scanlet-b'
		});
		const res = await get('wattle-and-wire', '/shop/brisling-scanlet', { redirect: 'manual' });
		expect(res.status).toBe(301);
		expect(res.headers.get('location')).toBe('/shop/scanlet-b');
		expect((await read('wattle-and-wire', '/shop/scanlet-b')).result).toMatchObject({
			ok: true,
			priceMinor: 2195,
			currency: 'AUD'
		});
	});

	it('bad control input is a 400 with a message', async () => {
		const r = await control('POST', '/listing', { shop: 'thamesbit', path: '/item/loop-rgb', priceMinor: -3 });
		expect(r.status).toBe(400);
		expect(r.json.error).toMatch(/priceMinor/);
		expect((await control('POST', '/fault', { shop: 'thamesbit', kind: 'meteor' })).status).toBe(400);
		expect((await control('POST', '/listing', { shop: 'thamesbit', path: '/item/none' })).status).toBe(404);
	});
});

describe('faults', () => {
	it('429 carries Retry-After (RFC 6585 4; RFC 9110 10.2.3) and `times` limits it', async () => {
		await control('POST', '/fault', {
			shop: 'northbay-circuits',
			path: '/products/scanlet',
			kind: 'http429',
			retryAfterSeconds: 90,
			times: 1
		});
		const first = await get('northbay-circuits', '/products/scanlet');
		expect(first.status).toBe(429);
		expect(first.headers.get('retry-after')).toBe('90');
		expect((await get('northbay-circuits', '/products/scanlet')).status).toBe(200);
	});

	it('500 until the fault is cleared with DELETE /fault', async () => {
		await control('POST', '/fault', { shop: 'kumo-parts', kind: 'http500' });
		expect((await get('kumo-parts', '/api/products/KP-1001')).status).toBe(500);
		expect((await get('kumo-parts', '/api/products/KP-1003')).status).toBe(500);
		const cleared = await control('DELETE', '/fault');
		expect(cleared.json.cleared).toBe(1);
		expect((await get('kumo-parts', '/api/products/KP-1001')).status).toBe(200);
	});

	it('a slow response runs past a client timeout', async () => {
		await control('POST', '/fault', { shop: 'thamesbit', path: '/item/beam-bridge-pro', kind: 'slow', delayMs: 2000 });
		const started = Date.now();
		await expect(get('thamesbit', '/item/beam-bridge-pro', { signal: AbortSignal.timeout(300) })).rejects.toThrow();
		expect(Date.now() - started).toBeLessThan(1500);
		// Other pages of the shop are not slowed.
		expect((await get('thamesbit', '/item/loop-rgb', { signal: AbortSignal.timeout(1000) })).status).toBe(200);
	});

	it("changed markup makes every shop's read fail with a reason, never a stock state", async () => {
		for (const s of SHOPS) {
			const l = LISTINGS.find((x) => x.shop === s.slug)!;
			await control('POST', '/fault', { shop: s.slug, kind: 'changed-markup', times: 1 });
			const { status, result } = await read(s.slug, l.path);
			expect(status).toBe(200);
			expect(result, s.slug).toMatchObject({ ok: false, stock: 'unknown', kind: 'no-price' });
			if (result && !result.ok) expect(result.reason).toMatch(/no price found/);
		}
		expect((await read('kanalhaus', '/artikel/vb-beam-bridge')).result).toMatchObject({ ok: true });
	});

	it('the kanalhaus reason names its selector', async () => {
		await control('POST', '/fault', { shop: 'kanalhaus', kind: 'changed-markup' });
		expect((await read('kanalhaus', '/artikel/vb-beam-bridge')).result).toMatchObject({
			ok: false,
			reason: 'no price found: selector ".artikel .preis" matched nothing'
		});
	});

	it('a truncated body is unreadable for HTML and JSON shops', async () => {
		for (const [shop, path] of [
			['northbay-circuits', '/products/scanlet'],
			['thamesbit', '/item/loop-rgb'],
			['kumo-parts', '/api/products/KP-1001'],
			['wattle-and-wire', '/shop/brisling-scanlet']
		]) {
			await control('POST', '/fault', { shop, path, kind: 'truncated', times: 1 });
			expect((await read(shop, path)).result, shop).toMatchObject({ ok: false, kind: 'unreadable', stock: 'unknown' });
		}
	});

	it('a wrong currency is reported as such; a missing one is read in the listing currency with a note, unless a configured currency field vanished', async () => {
		let readInListingCurrency = 0;
		for (const s of SHOPS) {
			const l = LISTINGS.find((x) => x.shop === s.slug)!;
			await control('POST', '/fault', { shop: s.slug, path: l.path, kind: 'wrong-currency', times: 1 });
			expect((await read(s.slug, l.path)).result, `${s.slug} wrong`).toMatchObject({
				ok: false,
				kind: 'wrong-currency'
			});
			await control('POST', '/fault', { shop: s.slug, path: l.path, kind: 'missing-currency', times: 1 });
			const missing = (await read(s.slug, l.path)).result;
			if (!missing) throw new Error(`${s.slug}: no extraction result`);
			if (missing.ok) {
				readInListingCurrency++;
				expect((missing.notes ?? []).join(' '), `${s.slug} missing`).toMatch(/no currency shown|read as/);
			} else {
				// The listing's own currency selector or API path found nothing: the page changed shape.
				expect(missing, `${s.slug} missing`).toMatchObject({ kind: 'no-currency' });
				expect(missing.reason, `${s.slug} missing`).toMatch(/selector|path/);
			}
		}
		expect(readInListingCurrency).toBeGreaterThan(0);
	});

	it('robots-disallow adds the path to robots.txt (RFC 9309 2.2.2)', async () => {
		await control('POST', '/fault', { shop: 'kanalhaus', path: '/artikel/brisling-scanlet', kind: 'robots-disallow' });
		const res = await get('kanalhaus', '/robots.txt');
		const rules = parseRobots(await res.text());
		expect(isAllowed(rules, UA, '/artikel/brisling-scanlet')).toBe(false);
		expect(isAllowed(rules, UA, '/artikel/q-cast-mini')).toBe(true);
	});
});

describe('timed faults from the scenario file', () => {
	it('a timeline 429 is active only inside its window', async () => {
		await control('POST', '/clock', { minutes: 485 });
		const res = await get('thamesbit', '/item/beam-bridge-pro');
		expect(res.status).toBe(429);
		expect(res.headers.get('retry-after')).toBe('300');
		expect((await control('GET', '/state')).json.faults).toEqual([
			expect.objectContaining({ kind: 'http429', source: 'timeline' })
		]);
		await control('POST', '/clock', { minutes: 490 });
		expect((await get('thamesbit', '/item/beam-bridge-pro')).status).toBe(200);
	});

	it('a 500 on robots.txt maps to complete disallow (RFC 9309 2.3.1.4)', async () => {
		await control('POST', '/clock', { minutes: 565 });
		const res = await get('northbay-circuits', '/robots.txt');
		expect(res.status).toBe(500);
		const rules = robotsFromFetch({ status: res.status, body: await res.text() });
		expect(isAllowed(rules, UA, '/products/scanlet')).toBe(false);
		// The pages themselves still answer: it is the poller's job to hold back.
		expect((await get('northbay-circuits', '/products/scanlet')).status).toBe(200);
	});
});

describe('conditional requests and the request log', () => {
	it('If-None-Match with the ETag gets 304 with no body (RFC 9110 13.1.2, 15.4.5)', async () => {
		const first = await get('northbay-circuits', '/products/loop-rgb');
		const etag = first.headers.get('etag')!;
		expect(etag).toMatch(/^"/);
		await first.text();
		const again = await get('northbay-circuits', '/products/loop-rgb', { headers: { 'If-None-Match': etag } });
		expect(again.status).toBe(304);
		expect(await again.text()).toBe('');
		// After a change the validator no longer matches.
		await control('POST', '/listing', { shop: 'northbay-circuits', path: '/products/loop-rgb', priceMinor: 1799 });
		expect((await get('northbay-circuits', '/products/loop-rgb', { headers: { 'If-None-Match': etag } })).status).toBe(
			200
		);
	});

	it('If-Modified-Since with Last-Modified gets 304 until the listing changes (RFC 9110 13.1.3)', async () => {
		const first = await get('kumo-parts', '/api/products/KP-1003');
		const lm = first.headers.get('last-modified')!;
		expect(lm).toBeTruthy();
		expect((await get('kumo-parts', '/api/products/KP-1003', { headers: { 'If-Modified-Since': lm } })).status).toBe(
			304
		);
		await control('POST', '/listing', { shop: 'kumo-parts', path: '/api/products/KP-1003', stock: 'in_stock' });
		const changed = await get('kumo-parts', '/api/products/KP-1003', { headers: { 'If-Modified-Since': lm } });
		expect(changed.status).toBe(200);
		expect(Date.parse(changed.headers.get('last-modified')!)).toBeGreaterThan(Date.parse(lm));
	});

	it('GET /requests logs shop, path, method, user-agent, validators and status', async () => {
		const first = await get('wattle-and-wire', '/shop/beam-bridge-pro');
		const etag = first.headers.get('etag')!;
		await get('wattle-and-wire', '/shop/beam-bridge-pro', { headers: { 'If-None-Match': etag } });
		const { json } = await control('GET', '/requests?shop=wattle-and-wire');
		const entries = json.requests.filter((e) => e.path === '/shop/beam-bridge-pro');
		expect(entries).toHaveLength(2);
		expect(entries[0]).toMatchObject({
			shop: 'wattle-and-wire',
			method: 'GET',
			userAgent: UA,
			status: 200,
			ifNoneMatch: null,
			minute: 0
		});
		expect(entries[1]).toMatchObject({ status: 304, ifNoneMatch: etag });
		expect(typeof entries[0].time).toBe('string');
	});

	it('POST /reset clears the log, faults and scripted changes', async () => {
		await get('thamesbit', '/item/loop-rgb');
		await control('POST', '/fault', { shop: 'thamesbit', kind: 'http500' });
		await control('POST', '/listing', { shop: 'thamesbit', path: '/item/loop-rgb', priceMinor: 999 });
		const { json } = await control('POST', '/reset');
		expect(json.faults).toEqual([]);
		expect(json.listings.find((l) => l.path === '/item/loop-rgb')?.priceMinor).toBe(1595);
		expect((await control('GET', '/requests')).json.requests).toEqual([]);
	});
});
