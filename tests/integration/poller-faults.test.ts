/**
 * Injected faults never become a stock or price change, and each is recorded as the right kind of
 * failure (listing_state.last_outcome / last_error, poll_count, backoff). Sources, per check:
 * RFC 9110 section 15.6.1 (500), 15.5.5 and 15.5.11 (404, 410), 15.4 (redirects), 10.2.3 (Retry-After,
 * seconds or HTTP-date); RFC 6585 section 4 (429); RFC 9309 sections 2.2.2 and 2.3.1.3-2.3.1.4
 * (robots.txt rules; 4xx allows all, 5xx disallows all); ISO 4217 (currency codes).
 * Backoff, timeout and body cap figures are our own (common practice), set in polling/config.ts.
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import {
	listingStates,
	listings,
	observations,
	pollCounts,
	shopPollStates,
	stockEvents
} from '../../src/lib/server/db/schema';
import { createWorld, setSpacing, T0, type World } from './poller-helpers';
import { LISTINGS } from '../../src/lib/demo/scenario';

let w: World;
const MIN = 60_000;

beforeAll(async () => {
	w = await createWorld('sg_it_poller_faults');
	await setSpacing(w.db, 0);
	// One clean first pass so every listing has validators and a known state.
	await w.poller().drain();
});
afterAll(async () => {
	await w?.close();
});
beforeEach(async () => {
	await w.control('POST', '/reset');
	await w.db.delete(shopPollStates);
	await w.db
		.update(listingStates)
		.set({ consecutiveFailures: 0, consecutiveNotFound: 0, nextPollAt: new Date(T0.getTime() + 10 * 24 * 60 * MIN) });
	w.clock.advance(60 * MIN);
});

async function snapshot(listingId: number) {
	const st = await w.state(listingId);
	const obs = await w.db.select().from(observations).where(eq(observations.listingId, listingId));
	const events = await w.db.select().from(stockEvents).where(eq(stockEvents.listingId, listingId));
	return {
		price: st.currentPriceMinor,
		currency: st.currentCurrency,
		stock: st.currentStock,
		since: st.currentSince,
		obs: obs.length,
		events: events.length
	};
}

async function countFor(shopSlugOutcome: string) {
	const rows = await w.db.select().from(pollCounts);
	return rows.filter((r) => r.outcome === shopSlugOutcome).reduce((n, r) => n + r.count, 0);
}

const faults: Array<[string, Record<string, unknown>, string, RegExp, string]> = [
	[
		'slow past the timeout',
		{ kind: 'slow', delayMs: 3000 },
		'timeout',
		/no complete answer within 500 ms/,
		'common practice: bounded request time'
	],
	['HTTP 500', { kind: 'http500' }, 'http_5xx', /HTTP 500/, 'RFC 9110 15.6.1'],
	['changed markup', { kind: 'changed-markup' }, 'unreadable', /no-price/, 'the extractor finds no offer'],
	['a truncated body', { kind: 'truncated' }, 'unreadable', /truncated/, 'an unfinished document is not trusted'],
	[
		'a wrong currency',
		{ kind: 'wrong-currency', currency: 'USD' },
		'wrong_currency',
		/wrong currency.*not the listing's EUR/,
		'ISO 4217 code differs'
	]
	// A missing currency is no longer a failure: a bare amount is read in the listing's configured
	// currency, with a note (tests/unit/feeds/pages.test.ts).
];

describe('a failed or unreadable poll is a failure, never a change', () => {
	it.each(faults)('%s', async (_name, fault, outcome, reason) => {
		const path = '/artikel/vb-beam-bridge';
		const id = await w.listingId('kanalhaus', path);
		await w.control('POST', '/fault', { shop: 'kanalhaus', path, ...fault });
		await w.makeDue(id);
		const before = await snapshot(id);
		const beforeCount = await countFor(outcome);
		const r = await w.poller({ timeoutMs: 500 }).pollListing(id);
		expect(r?.outcome).toBe(outcome);
		expect(r?.changed).toBe(false);
		const st = await w.state(id);
		expect(st.lastOutcome).toBe(outcome);
		expect(st.lastError).toMatch(reason);
		expect(st.lastErrorAt).toEqual(w.clock.now());
		expect(st.consecutiveFailures).toBe(1);
		expect(st.leaseOwner).toBeNull();
		// Backoff: interval (30 min) x 2^1, no jitter with random() = 0.5.
		expect(st.nextPollAt.getTime() - w.clock.now().getTime()).toBe(60 * MIN);
		expect(await snapshot(id)).toEqual(before);
		expect(await countFor(outcome)).toBe(beforeCount + 1);
	});

	it('backoff doubles with each failure in a row and a success resets it', async () => {
		const path = '/products/phosphor-one';
		const id = await w.listingId('northbay-circuits', path);
		await w.control('POST', '/fault', { shop: 'northbay-circuits', path, kind: 'http500' });
		const p = w.poller();
		for (const expected of [60, 120, 240]) {
			await w.makeDue(id);
			await p.pollListing(id);
			const st = await w.state(id);
			expect(st.nextPollAt.getTime() - w.clock.now().getTime()).toBe(expected * MIN);
		}
		await w.control('DELETE', '/fault');
		await w.makeDue(id);
		expect((await p.pollListing(id))?.outcome).toMatch(/^(ok|not_modified)$/);
		const st = await w.state(id);
		expect(st.consecutiveFailures).toBe(0);
		expect(st.nextPollAt.getTime() - w.clock.now().getTime()).toBe(30 * MIN);
	});
});

describe('Retry-After and robots.txt are obeyed', () => {
	it('429 with Retry-After pauses the whole shop; no request reaches it inside the window (RFC 6585 4, RFC 9110 10.2.3)', async () => {
		const path = '/item/loop-rgb';
		const id = await w.listingId('thamesbit', path);
		await w.control('POST', '/fault', { shop: 'thamesbit', kind: 'http429', retryAfterSeconds: 600 });
		await w.makeDue(id);
		const p = w.poller();
		const before = await snapshot(id);
		const r = await p.pollListing(id);
		expect(r?.outcome).toBe('rate_limited');
		expect(await snapshot(id)).toEqual(before);
		const st = await w.state(id);
		expect(st.nextPollAt.getTime() - w.clock.now().getTime()).toBe(60 * MIN); // max(backoff 60 min, Retry-After 10 min)
		const [pause] = await w.db.select().from(shopPollStates);
		expect(pause.pausedUntil!.getTime() - w.clock.now().getTime()).toBe(600_000);

		// Inside the window every thamesbit listing is due, one with "poll now" too: none is fetched.
		await w.markRequests();
		const thamesbit = (await w.db.select({ id: listings.id, shopId: listings.shopId }).from(listings)).filter(
			(l) => l.shopId === pause.shopId
		);
		for (const l of thamesbit) await w.makeDue(l.id);
		await w.db.update(listingStates).set({ pollRequestedAt: w.clock.now() }).where(eq(listingStates.listingId, id));
		w.clock.advance(9 * MIN);
		await p.drain();
		expect(await w.requests('thamesbit')).toEqual([]);

		// After the window the shop is polled again (the fault is gone by then).
		await w.control('DELETE', '/fault');
		w.clock.advance(2 * MIN);
		const s = await p.drain();
		expect((await w.requests('thamesbit')).filter((q) => q.path !== '/robots.txt').length).toBe(thamesbit.length);
		expect(s.polled).toBeGreaterThanOrEqual(thamesbit.length);
		expect((await w.state(id)).pollRequestedAt).toBeNull();
	});

	it('a 503 with an HTTP-date Retry-After is honoured against the response Date header', async () => {
		// The fake shops answer 429 only; a 503 is exercised through an injected fetch.
		const id = await w.listingId('kumo-parts', '/api/products/KP-1001');
		await w.makeDue(id);
		const serverNow = new Date('2030-01-01T00:00:00Z');
		const fetchImpl: typeof fetch = async (input) => {
			if (String(input).endsWith('/robots.txt')) return new Response('User-agent: *\nAllow: /\n', { status: 200 });
			return new Response('busy', {
				status: 503,
				headers: { 'Retry-After': new Date(serverNow.getTime() + 120_000).toUTCString(), Date: serverNow.toUTCString() }
			});
		};
		const r = await w.poller({ fetchImpl }).pollListing(id);
		expect(r?.outcome).toBe('http_5xx');
		const [pause] = await w.db.select().from(shopPollStates);
		expect(pause.pausedUntil!.getTime() - w.clock.now().getTime()).toBe(120_000);
	});

	it('a path disallowed by robots.txt is never requested (RFC 9309 2.2.2)', async () => {
		const path = '/artikel/brisling-scanlet';
		const id = await w.listingId('kanalhaus', path);
		await w.control('POST', '/fault', { shop: 'kanalhaus', path, kind: 'robots-disallow' });
		await w.makeDue();
		await w.markRequests();
		const before = await snapshot(id);
		const s = await w.poller().drain();
		const reqs = await w.requests('kanalhaus');
		expect(reqs.filter((q) => q.path === '/robots.txt')).toHaveLength(1);
		expect(reqs.map((q) => q.path)).not.toContain(path);
		// The shop's other pages are still read.
		expect(reqs.filter((q) => q.path.startsWith('/artikel/')).length).toBe(
			LISTINGS.filter((l) => l.shop === 'kanalhaus').length - 1
		);
		const st = await w.state(id);
		expect(st.lastOutcome).toBe('robots_disallowed');
		expect(st.lastError).toMatch(/Disallow: \/artikel\/brisling-scanlet/);
		expect(await snapshot(id)).toEqual(before);
		expect(s.byOutcome.robots_disallowed).toBe(1);
	});

	it('robots.txt answering 500 means complete disallow: no page of that shop is fetched (RFC 9309 2.3.1.4)', async () => {
		await w.control('POST', '/fault', { shop: 'northbay-circuits', path: '/robots.txt', kind: 'http500' });
		await w.makeDue();
		await w.markRequests();
		const s = await w.poller().drain();
		const reqs = await w.requests('northbay-circuits');
		expect(reqs.map((q) => q.path)).toEqual(['/robots.txt']);
		expect(s.byOutcome.robots_disallowed).toBe(LISTINGS.filter((l) => l.shop === 'northbay-circuits').length);
	});

	it('robots.txt answering 404 means no restrictions (RFC 9309 2.3.1.3)', async () => {
		const fetchImpl: typeof fetch = async (input, init) =>
			String(input).endsWith('/robots.txt') ? new Response('not here', { status: 404 }) : fetch(input, init);
		const id = await w.listingId('northbay-circuits', '/products/scanlet');
		await w.makeDue(id);
		expect((await w.poller({ fetchImpl }).pollListing(id))?.outcome).toMatch(/^(ok|not_modified)$/);
	});

	it('robots.txt is cached for at most 24 hours (RFC 9309 2.4)', async () => {
		const p = w.poller();
		const id = await w.listingId('wattle-and-wire', '/shop/beam-bridge-pro');
		await w.markRequests();
		for (const step of [0, 6, 6, 6, 7]) {
			w.clock.advance(step * 60 * MIN);
			await w.makeDue(id);
			await p.pollListing(id);
		}
		// Fetched at hour 0 and again once the copy was older than 24 h (hour 25), not in between.
		expect((await w.requests('wattle-and-wire')).filter((q) => q.path === '/robots.txt')).toHaveLength(2);
	});
});

describe('gone pages, redirects and "poll now"', () => {
	it('410 Gone delists at once; the stock state stays what it was (RFC 9110 15.5.11)', async () => {
		const path = '/artikel/q-cast-mini';
		const id = await w.listingId('kanalhaus', path);
		await w.control('POST', '/listing', { shop: 'kanalhaus', path, status: 'gone410' });
		await w.makeDue(id);
		const before = await snapshot(id);
		const r = await w.poller().pollListing(id);
		expect(r).toMatchObject({ outcome: 'gone', delisted: true, changed: false });
		expect(await snapshot(id)).toEqual(before);
		const [l] = await w.db.select().from(listings).where(eq(listings.id, id));
		expect(l.delistedAt).toEqual(w.clock.now());
		// A delisted listing is not claimed again.
		await w.makeDue(id);
		expect(await w.poller().pollListing(id)).toBeNull();
		await w.db.update(listings).set({ delistedAt: null }).where(eq(listings.id, id));
	});

	it('404 is a failure; three in a row delist the listing, never as out of stock (our policy)', async () => {
		const path = '/item/phosphor-one';
		const id = await w.listingId('thamesbit', path);
		await w.control('POST', '/listing', { shop: 'thamesbit', path, status: 'gone404' });
		const before = await snapshot(id);
		const p = w.poller();
		for (let i = 1; i <= 3; i++) {
			await w.makeDue(id);
			const r = await p.pollListing(id);
			expect(r?.outcome).toBe('gone');
			expect(r?.delisted ?? false).toBe(i === 3);
			expect((await w.state(id)).consecutiveNotFound).toBe(i);
		}
		expect(await snapshot(id)).toEqual(before);
		await w.db.update(listings).set({ delistedAt: null }).where(eq(listings.id, id));
	});

	it('a moved page is followed through its redirect (RFC 9110 15.4.2)', async () => {
		const path = '/shop/brisling-scanlet';
		const id = await w.listingId('wattle-and-wire', path);
		await w.control('POST', '/listing', {
			shop: 'wattle-and-wire',
			path,
			status: 'redirect',
			redirectTo: '/shop/brisling-scanlet-rev-b',
			priceMinor: 1995
		});
		await w.makeDue(id);
		await w.markRequests();
		const r = await w.poller().pollListing(id);
		expect(r).toMatchObject({ outcome: 'ok', changed: true });
		expect(r?.detail).toMatch(/via 1 redirect/);
		expect((await w.state(id)).currentPriceMinor).toBe(1995);
		const paths = (await w.requests('wattle-and-wire')).map((q) => `${q.path} ${q.status}`);
		expect(paths).toEqual(expect.arrayContaining([`${path} 301`, '/shop/brisling-scanlet-rev-b 200']));
	});

	it('a body over the cap is too_large and not read', async () => {
		const id = await w.listingId('northbay-circuits', '/products/loop-rgb');
		// No validators, so the shop answers 200 with the whole page rather than 304.
		await w.db.update(listingStates).set({ etag: null, lastModified: null }).where(eq(listingStates.listingId, id));
		await w.makeDue(id);
		const r = await w.poller({ maxBodyBytes: 512 }).pollListing(id);
		expect(r?.outcome).toBe('too_large');
	});

	it('"poll now" polls a listing that is not due, then clears the request', async () => {
		const id = await w.listingId('kumo-parts', '/api/products/KP-1003');
		await w.db
			.update(listingStates)
			.set({ nextPollAt: new Date(w.clock.now().getTime() + 600 * MIN), pollRequestedAt: w.clock.now() })
			.where(eq(listingStates.listingId, id));
		const s = await w.poller().drain();
		expect(s.polled).toBe(1);
		const st = await w.state(id);
		expect(st.pollRequestedAt).toBeNull();
		expect(st.lastCheckedAt).toEqual(w.clock.now());
	});

	it('the alerts hook runs inside the observation transaction: if it throws, nothing of the change is kept', async () => {
		const path = '/products/beam-bridge';
		const id = await w.listingId('northbay-circuits', path);
		await w.control('POST', '/listing', { shop: 'northbay-circuits', path, stock: 'in_stock' });
		await w.makeDue(id);
		const before = await snapshot(id);
		const failing = await w
			.poller({ onStockEvents: async () => Promise.reject(new Error('outbox unavailable')) })
			.pollListing(id);
		expect(failing).toMatchObject({ skipped: 'write_failed' });
		expect(await snapshot(id)).toEqual(before);
		expect((await w.state(id)).leaseOwner).toBeNull();

		const seen: unknown[] = [];
		await w.makeDue(id);
		const ok = await w.poller({ onStockEvents: async (tx, events) => void seen.push(...events) }).pollListing(id);
		expect(ok).toMatchObject({ outcome: 'ok', changed: true });
		expect(seen).toEqual([
			expect.objectContaining({
				kind: 'restock',
				listingId: id,
				previousStock: 'out_of_stock',
				priceMinor: 2499,
				currency: 'USD',
				quiet: false
			})
		]);
		const events = await w.db
			.select()
			.from(stockEvents)
			.where(and(eq(stockEvents.listingId, id), eq(stockEvents.kind, 'restock')));
		expect(events).toHaveLength(1);
	});
});
