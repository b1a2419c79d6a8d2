/**
 * A shop page that says the product is discontinued and shows no price (schema.org
 * ItemAvailability "Discontinued" without Offer.price) is a reading, not a failure: the stock
 * state changes to discontinued and the last known price is kept, never erased.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { listingStates, listings, observations, stockEvents } from '../../src/lib/server/db/schema';
import { recordPolls, type PollVerdict } from '../../src/lib/server/polling';
import { createWorld, setSpacing, type World } from './poller-helpers';

let w: World;

beforeAll(async () => {
	w = await createWorld('sg_it_poller_discontinued');
	await setSpacing(w.db, 0);
});
afterAll(async () => {
	await w?.close();
});

const discontinuedNoPrice: PollVerdict = {
	kind: 'ok',
	priceMinor: null,
	currency: null,
	stock: 'discontinued',
	etag: null,
	lastModified: null,
	detail: 'no price, discontinued'
};

async function claimOne(id: number) {
	w.clock.advance(3_600_000);
	await w.db
		.update(listingStates)
		.set({ nextPollAt: w.clock.now(), leaseOwner: null, leaseUntil: null })
		.where(eq(listingStates.listingId, id));
	const [c] = await w.poller({ workerId: 'discontinued-test' }).claim(1, [id]);
	expect(c?.listingId).toBe(id);
	return c;
}

describe('a discontinued page without a price', () => {
	it('records the discontinued state with the last known price, and reading it again changes nothing', async () => {
		const [{ id }] = await w.db.select({ id: listings.id }).from(listings).orderBy(listings.id).limit(1);
		await w.db
			.update(listingStates)
			.set({ currentStock: 'in_stock', currentPriceMinor: 2490, currentCurrency: 'EUR' })
			.where(eq(listingStates.listingId, id));

		const first = await claimOne(id);
		const [r] = await recordPolls(w.db, [{ c: first, verdict: discontinuedNoPrice, now: w.clock.now() }], {
			random: () => 0.5
		});
		expect(r).toMatchObject({ outcome: 'ok', changed: true });
		const [st] = await w.db.select().from(listingStates).where(eq(listingStates.listingId, id));
		expect(st).toMatchObject({ currentStock: 'discontinued', currentPriceMinor: 2490, currentCurrency: 'EUR' });
		const [obs] = await w.db.select().from(observations).where(eq(observations.id, r.observationId!));
		expect(obs).toMatchObject({ stock: 'discontinued', priceMinor: 2490, currency: 'EUR' });
		// In stock -> discontinued is a sell-out, priced at the last known price.
		const events = await w.db.select().from(stockEvents).where(eq(stockEvents.observationId, obs.id));
		expect(events.map((e) => [e.kind, e.priceMinor])).toEqual([['sellout', 2490]]);

		const again = await claimOne(id);
		const [r2] = await recordPolls(w.db, [{ c: again, verdict: discontinuedNoPrice, now: w.clock.now() }], {
			random: () => 0.5
		});
		expect(r2).toMatchObject({ outcome: 'ok', changed: false });
	});
});
