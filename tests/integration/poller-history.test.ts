/**
 * Storage grows with changes, not with polls: 1,000 polls of one listing with 10 real changes
 * (and a few faults) store 10 new change points, while listing_state and poll_count carry the rest.
 * The poll function is driven directly with an injected clock; no real time is waited for.
 * Event rules are the design's (Vocabulary: restock = not buyable -> buyable; Alerts: quiet period).
 */
import { afterAll, beforeAll, describe, expect, it, onTestFinished } from 'vitest';
import { and, eq, ne } from 'drizzle-orm';
import { listingStates, listings, observations, pollCounts, stockEvents } from '../../src/lib/server/db/schema';
import { createWorld, setSpacing, type World } from './poller-helpers';

let w: World;
const MIN = 60_000;
const SHOP = 'northbay-circuits';
const PATH = '/products/beam-bridge'; // starts out of stock at 24.99 USD

beforeAll(async () => {
	w = await createWorld('sg_it_poller_history');
	await setSpacing(w.db, 0);
});
afterAll(async () => {
	await w?.close();
});

describe('change points', () => {
	it('1,000 polls with 10 real changes store 10 change points', async () => {
		const id = await w.listingId(SHOP, PATH);
		// Only this listing takes part (the next test needs them all again, whatever happens here).
		await w.db.update(listings).set({ active: false }).where(ne(listings.id, id));
		onTestFinished(() =>
			w.db
				.update(listings)
				.set({ active: true })
				.then(() => undefined)
		);
		const changes: Record<number, Record<string, unknown>> = {
			50: { stock: 'in_stock' }, // restock
			150: { priceMinor: 2299 }, // price drop while buyable
			250: { stock: 'out_of_stock' }, // sell-out
			350: { stock: 'in_stock' }, // restock
			450: { priceMinor: 2399 }, // price rise: a change point, no event
			550: { stock: 'preorder' }, // still buyable: no event
			650: { stock: 'in_stock' }, // still buyable: no event
			750: { stock: 'out_of_stock' }, // sell-out
			850: { stock: 'backorder' }, // still not buyable: no event
			950: { stock: 'in_stock' } // restock
		};
		const faults: Record<number, Record<string, unknown>> = {
			100: { kind: 'http500' },
			300: { kind: 'truncated' },
			500: { kind: 'changed-markup' },
			700: { kind: 'wrong-currency', currency: 'EUR' },
			// Read in the listing's configured currency (USD) with a note: same price, no change point.
			900: { kind: 'missing-currency' }
		};
		const p = w.poller();
		const before = (await w.db.select().from(observations).where(eq(observations.listingId, id))).length;
		await w.markRequests();
		let polls = 0;
		let changed = 0;
		for (let step = 0; polls < 1000 && step < 2000; step++) {
			if (changes[polls]) await w.control('POST', '/listing', { shop: SHOP, path: PATH, ...changes[polls] });
			if (faults[polls]) await w.control('POST', '/fault', { shop: SHOP, path: PATH, times: 1, ...faults[polls] });
			const s = await p.runOnce();
			polls += s.polled;
			changed += s.changed;
			delete changes[polls - s.polled];
			delete faults[polls - s.polled];
			w.clock.advance(30 * MIN);
		}
		expect(polls).toBe(1000);
		expect(changed).toBe(10);
		const obs = await w.db.select().from(observations).where(eq(observations.listingId, id));
		expect(obs.length - before).toBe(10);
		// Faults left no trace in the history: every stored price is one the shop really served.
		expect(new Set(obs.map((o) => o.priceMinor))).toEqual(new Set([2499, 2299, 2399]));
		expect(obs.every((o) => o.currency === 'USD')).toBe(true);

		const events = await w.db.select().from(stockEvents).where(eq(stockEvents.listingId, id));
		const kinds = events.map((e) => e.kind).sort();
		expect(kinds).toEqual(['price_drop', 'restock', 'restock', 'restock', 'sellout', 'sellout']);
		expect(events.every((e) => !e.quiet)).toBe(true);
		expect(events.find((e) => e.kind === 'price_drop')).toMatchObject({ priceMinor: 2299, previousStock: 'in_stock' });

		const counts = await w.db.select().from(pollCounts);
		const total = counts.reduce((n, c) => n + c.count, 0);
		expect(total).toBe(1000);
		const byOutcome = Object.fromEntries(
			['http_5xx', 'unreadable', 'wrong_currency'].map((k) => [
				k,
				counts.filter((c) => c.outcome === k).reduce((n, c) => n + c.count, 0)
			])
		);
		// The truncated page and the changed markup; the bare amount at 900 was a good read.
		expect(byOutcome).toEqual({ http_5xx: 1, unreadable: 2, wrong_currency: 1 });

		// Conditional requests: nearly every poll was a 304 with no body.
		const pageRequests = (await w.requests(SHOP)).filter((r) => r.path === PATH);
		expect(pageRequests).toHaveLength(1000);
		expect(pageRequests.filter((r) => r.status === 304).length).toBeGreaterThan(950);

		const st = await w.state(id);
		expect(st).toMatchObject({
			currentStock: 'in_stock',
			currentPriceMinor: 2399,
			currentCurrency: 'USD',
			consecutiveFailures: 0
		});
		expect(st.lastCheckedAt!.getTime()).toBe(w.clock.now().getTime() - 30 * MIN);
	}, 120_000);

	it('a restock soon after the previous one is stored as quiet (flapping stock)', async () => {
		const path = '/products/scanlet'; // in stock
		const id = await w.listingId(SHOP, path);
		const p = w.poller();
		const step = async (change: Record<string, unknown>) => {
			await w.control('POST', '/listing', { shop: SHOP, path, ...change });
			await w.makeDue(id);
			await p.pollListing(id);
			w.clock.advance(20 * MIN);
		};
		await w.makeDue();
		await p.drain();
		await step({ stock: 'out_of_stock' });
		await step({ stock: 'in_stock' });
		await step({ stock: 'out_of_stock' });
		await step({ stock: 'in_stock' }); // 40 minutes after the last restock
		const restocks = await w.db
			.select()
			.from(stockEvents)
			.where(and(eq(stockEvents.listingId, id), eq(stockEvents.kind, 'restock')))
			.orderBy(stockEvents.at);
		expect(restocks.map((r) => r.quiet)).toEqual([false, true]);
		const st = await w.db.select().from(listingStates).where(eq(listingStates.listingId, id));
		expect(st[0].currentStock).toBe('in_stock');
	});
});
