/**
 * Several workers share the listings without polling one twice at once, and each shop's limits
 * hold across them: at most max_concurrency requests in flight, starts min_spacing_ms apart.
 * Row claims use PostgreSQL's FOR UPDATE SKIP LOCKED (PostgreSQL 15 manual, SELECT "The Locking
 * Clause"); the politeness limits themselves are common practice for crawlers.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { LISTINGS, SHOPS } from '../../src/lib/demo/scenario';
import { createDb } from '../../src/lib/server/db/client';
import { listingStates, shops as shopTable } from '../../src/lib/server/db/schema';
import { createPoller } from '../../src/lib/server/polling';
import type { RequestLogEntry } from '../../fixtures/shops/server';
import { createWorld, setSpacing, TEST_UA, type World } from './poller-helpers';

let w: World;
const MIN = 60_000;
const pools: Array<ReturnType<typeof createDb>> = [];

beforeAll(async () => {
	w = await createWorld('sg_it_poller_workers');
	await setSpacing(w.db, 0);
	pools.push(createDb(w.url, { max: 3 }), createDb(w.url, { max: 3 }));
});
afterAll(async () => {
	for (const p of pools) await p.sql.end({ timeout: 5 });
	await w?.close();
});

/** Spans [start, end) of requests that reached a handler (status 0 = client gave up). */
const span = (r: RequestLogEntry) => [Date.parse(r.time), Date.parse(r.time) + r.ms] as const;

function maxOverlap(reqs: RequestLogEntry[]): number {
	const edges = reqs.flatMap((r) => {
		const [a, b] = span(r);
		return [
			[a, 1],
			[b, -1]
		] as const;
	});
	edges.sort((x, y) => x[0] - y[0] || x[1] - y[1]);
	let cur = 0;
	let max = 0;
	for (const [, d] of edges) max = Math.max(max, (cur += d));
	return max;
}

describe('two workers', () => {
	it('share the work, never poll one listing twice at once, and keep each shop within max_concurrency', async () => {
		// Every page answers after 60 ms so work overlaps; robots.txt stays fast.
		for (const s of SHOPS) await w.control('POST', '/fault', { shop: s.slug, kind: 'slow', delayMs: 60 });
		const make = (i: number) =>
			createPoller(pools[i].db, {
				workerId: `worker-${i}`,
				clock: w.clock.now,
				random: () => 0.5,
				allowPrivate: true,
				userAgent: TEST_UA,
				claimLimit: 4
			});
		const workers = [make(0), make(1)];
		const perWorker = [0, 0];
		await w.markRequests();
		for (let round = 0; round < 3; round++) {
			await w.makeDue();
			const results = await Promise.all(workers.map((p) => p.drain()));
			results.forEach((r, i) => (perWorker[i] += r.polled));
			expect(
				results.reduce((n, r) => n + r.polled, 0),
				`round ${round}`
			).toBe(LISTINGS.length);
			w.clock.advance(31 * MIN);
		}
		expect(perWorker[0]).toBeGreaterThan(0);
		expect(perWorker[1]).toBeGreaterThan(0);

		const pages = (await w.requests()).filter((r) => r.path !== '/robots.txt');
		// Each listing exactly once per round (redirect hops aside, there are none at clock 0).
		const byPath = new Map<string, RequestLogEntry[]>();
		for (const r of pages) byPath.set(`${r.shop} ${r.path}`, [...(byPath.get(`${r.shop} ${r.path}`) ?? []), r]);
		expect(byPath.size).toBe(LISTINGS.length);
		for (const [key, reqs] of byPath) {
			expect(reqs, key).toHaveLength(3);
			expect(maxOverlap(reqs), key).toBe(1);
		}
		for (const s of SHOPS) {
			const reqs = (await w.requests(s.slug)).filter((r) => r.path !== '/robots.txt');
			expect(maxOverlap(reqs), s.slug).toBeLessThanOrEqual(2); // seed: max_concurrency 2
		}
		// No lease is left behind.
		const leased = (await w.db.select().from(listingStates)).filter((s) => s.leaseOwner);
		expect(leased).toEqual([]);
		await w.control('DELETE', '/fault');
	}, 60_000);

	it('an expired lease can be claimed by another worker; the first worker then cannot overwrite its result', async () => {
		const id = await w.listingId('thamesbit', '/item/loop-rgb');
		await w.makeDue(id);
		const a = createPoller(pools[0].db, {
			workerId: 'worker-a',
			clock: w.clock.now,
			random: () => 0.5,
			allowPrivate: true,
			userAgent: TEST_UA
		});
		const b = createPoller(pools[1].db, {
			workerId: 'worker-b',
			clock: w.clock.now,
			random: () => 0.5,
			allowPrivate: true,
			userAgent: TEST_UA
		});
		const [claimed] = await a.claim(10, [id]);
		expect(claimed.listingId).toBe(id);
		// While A's lease lives, B gets nothing at that listing (nor at that shop).
		expect(await b.claim(10, [id])).toEqual([]);
		// A stalls past its lease; B takes over.
		const st = await w.state(id);
		w.clock.set(new Date(st.leaseUntil!.getTime() + 1000));
		await w.makeDue(id);
		const [taken] = await b.claim(10, [id]);
		expect(taken?.listingId).toBe(id);
		expect(await a.pollClaimed(claimed)).toMatchObject({ skipped: 'lease_lost' });
		expect((await b.pollClaimed(taken)).skipped).toBeUndefined();
		expect((await w.state(id)).leaseOwner).toBeNull();
	});

	it('starts requests to one shop at least min_spacing_ms apart', async () => {
		await w.db.update(shopTable).set({ minSpacingMs: 300, maxConcurrency: 2 }).where(eq(shopTable.slug, 'kanalhaus'));
		await w.makeDue();
		await w.markRequests();
		await createPoller(pools[0].db, {
			clock: w.clock.now,
			random: () => 0.5,
			allowPrivate: true,
			userAgent: TEST_UA
		}).drain();
		const starts = (await w.requests('kanalhaus')).map((r) => Date.parse(r.time)).sort((x, y) => x - y);
		expect(starts.length).toBeGreaterThanOrEqual(4);
		// The log stamps arrival at the shop, which event-loop delays can shift by a few ms either way, so
		// each gap gets slack and the mean gap must still reach the spacing.
		for (let i = 1; i < starts.length; i++) expect(starts[i] - starts[i - 1]).toBeGreaterThanOrEqual(200);
		expect((starts[starts.length - 1] - starts[0]) / (starts.length - 1)).toBeGreaterThanOrEqual(290);
		await setSpacing(w.db, 0);
	});
});
