/**
 * Batched writes (record.ts, write-queue.ts): many polls in one transaction must store exactly what
 * the same polls stored one by one (no false change, events in the same transaction as their
 * observation), and a batch the alerts hook refuses falls back to one transaction per poll, so only
 * the refused listing is left unstored. The rules checked are our own (DEVELOPERS.md, Polling).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, sql } from 'drizzle-orm';
import { listingStates, listings, observations, pollCounts, stockEvents } from '../../src/lib/server/db/schema';
import { recordPolls, type ClaimedListing, type PendingPoll, type PollVerdict } from '../../src/lib/server/polling';
import { createWorld, setSpacing, type World } from './poller-helpers';

let w: World;

beforeAll(async () => {
	w = await createWorld('sg_it_poller_batch');
	await setSpacing(w.db, 0);
});
afterAll(async () => {
	await w?.close();
});

const ok = (stock: 'in_stock' | 'out_of_stock', priceMinor = 1000): PollVerdict => ({
	kind: 'ok',
	priceMinor,
	currency: 'USD',
	stock,
	etag: '"v2"',
	lastModified: null,
	detail: 'test read'
});

/** Claim `n` listings with a known state: out of stock at 1000 USD. */
async function claimKnown(n: number): Promise<ClaimedListing[]> {
	w.clock.advance(3_600_000);
	const ids = (await w.db.select({ id: listings.id }).from(listings).orderBy(listings.id).limit(n)).map((r) => r.id);
	await w.db
		.update(listingStates)
		.set({
			currentStock: 'out_of_stock',
			currentPriceMinor: 1000,
			currentCurrency: 'USD',
			nextPollAt: w.clock.now(),
			consecutiveFailures: 0,
			consecutiveNotFound: 0,
			leaseOwner: null,
			leaseUntil: null
		})
		.where(inArray(listingStates.listingId, ids));
	await w.db.update(listings).set({ delistedAt: null }).where(inArray(listings.id, ids));
	const claimed = await w.poller({ workerId: 'batch-test' }).claim(n, ids);
	expect(claimed.map((c) => c.listingId).sort()).toEqual([...ids].sort());
	return claimed.sort((a, b) => a.listingId - b.listingId);
}

const counts = async () =>
	Number((await w.db.execute<{ n: number }>(sql`select coalesce(sum(count), 0)::int as n from ${pollCounts}`))[0].n);

describe('recordPolls', () => {
	it('stores a mixed batch in one transaction, each listing as it would be alone', async () => {
		const [a, b, c, d, e] = await claimKnown(5);
		const now = w.clock.now();
		const batch: PendingPoll[] = [
			{ c: a, verdict: ok('in_stock'), now }, // restock
			{ c: b, verdict: ok('out_of_stock'), now }, // no change: validators only
			{ c: c, verdict: { kind: 'not_modified', detail: '304' }, now },
			{ c: d, verdict: { kind: 'failure', outcome: 'timeout', detail: 'slow' }, now }, // never a stock change
			{ c: e, verdict: { kind: 'failure', outcome: 'gone', detail: '410', goneForGood: true }, now }
		];
		const hookCalls: Array<{ kinds: string[]; sawObservation: boolean }> = [];
		const before = await counts();
		const results = await recordPolls(w.db, batch, {
			random: () => 0.5,
			onStockEvents: async (tx, events) => {
				// Inside the same transaction: the observation the event points at is visible here.
				const [o] = await tx
					.select({ id: observations.id })
					.from(observations)
					.where(eq(observations.id, events[0].observationId));
				hookCalls.push({ kinds: events.map((ev) => ev.kind), sawObservation: !!o });
			}
		});
		expect(results.map((r) => r.listingId)).toEqual([a, b, c, d, e].map((x) => x.listingId));
		expect(results.map((r) => r.outcome)).toEqual(['ok', 'ok', 'not_modified', 'timeout', 'gone']);
		expect(results.map((r) => r.changed)).toEqual([true, false, false, false, false]);
		expect(hookCalls).toEqual([{ kinds: ['restock'], sawObservation: true }]);
		expect(results[0].events).toEqual([
			expect.objectContaining({ kind: 'restock', listingId: a.listingId, previousStock: 'out_of_stock', quiet: false })
		]);

		const st = new Map(
			(
				await w.db
					.select()
					.from(listingStates)
					.where(
						inArray(
							listingStates.listingId,
							batch.map((p) => p.c.listingId)
						)
					)
			).map((s) => [s.listingId, s])
		);
		expect(st.get(a.listingId)).toMatchObject({
			currentStock: 'in_stock',
			currentSince: now,
			etag: '"v2"',
			leaseOwner: null,
			lastOutcome: 'ok'
		});
		expect(st.get(b.listingId)).toMatchObject({ currentStock: 'out_of_stock', etag: '"v2"', leaseOwner: null });
		expect(st.get(c.listingId)).toMatchObject({
			currentStock: 'out_of_stock',
			lastOutcome: 'not_modified',
			lastSuccessAt: now
		});
		expect(st.get(d.listingId)).toMatchObject({
			currentStock: 'out_of_stock',
			currentPriceMinor: 1000,
			consecutiveFailures: 1,
			lastError: 'slow',
			lastErrorAt: now
		});
		expect(st.get(d.listingId)!.nextPollAt.getTime()).toBeGreaterThan(now.getTime());
		const [gone] = await w.db
			.select({ delistedAt: listings.delistedAt })
			.from(listings)
			.where(eq(listings.id, e.listingId));
		expect(gone.delistedAt).toEqual(now);
		const obs = await w.db
			.select()
			.from(observations)
			.where(
				inArray(
					observations.listingId,
					batch.map((p) => p.c.listingId)
				)
			);
		expect(obs.filter((o) => o.observedAt.getTime() === now.getTime()).map((o) => o.listingId)).toEqual([a.listingId]);
		expect(await counts()).toBe(before + 5);
	});

	it('a batch the hook refuses is written poll by poll: only the refused listing stays unstored', async () => {
		const [a, b, c] = await claimKnown(3);
		const now = w.clock.now();
		const batch: PendingPoll[] = [
			{ c: a, verdict: ok('in_stock', 1100), now },
			{ c: b, verdict: ok('in_stock', 1200), now },
			{ c: c, verdict: { kind: 'not_modified', detail: '304' }, now }
		];
		const results = await recordPolls(w.db, batch, {
			random: () => 0.5,
			onStockEvents: async (_tx, events) => {
				if (events.some((ev) => ev.listingId === a.listingId)) throw new Error('outbox unavailable');
			}
		});
		expect(results.map((r) => r.skipped ?? r.outcome)).toEqual(['write_failed', 'ok', 'not_modified']);
		const st = new Map(
			(
				await w.db
					.select()
					.from(listingStates)
					.where(inArray(listingStates.listingId, [a.listingId, b.listingId]))
			).map((s) => [s.listingId, s])
		);
		expect(st.get(a.listingId)).toMatchObject({
			currentStock: 'out_of_stock',
			currentPriceMinor: 1000,
			leaseOwner: null
		});
		expect(st.get(b.listingId)).toMatchObject({ currentStock: 'in_stock', currentPriceMinor: 1200 });
		const evA = await w.db
			.select()
			.from(stockEvents)
			.where(and(eq(stockEvents.listingId, a.listingId), eq(stockEvents.at, now)));
		const evB = await w.db
			.select()
			.from(stockEvents)
			.where(and(eq(stockEvents.listingId, b.listingId), eq(stockEvents.at, now)));
		expect(evA).toHaveLength(0);
		expect(evB).toHaveLength(1);
	});

	it('drops the result of a listing whose lease passed to another worker, and stores the rest', async () => {
		const [a, b] = await claimKnown(2);
		await w.db
			.update(listingStates)
			.set({ leaseOwner: 'someone-else' })
			.where(eq(listingStates.listingId, a.listingId));
		const now = w.clock.now();
		const results = await recordPolls(
			w.db,
			[
				{ c: a, verdict: ok('in_stock'), now },
				{ c: b, verdict: ok('in_stock'), now }
			],
			{ random: () => 0.5 }
		);
		expect(results.map((r) => r.skipped ?? r.outcome)).toEqual(['lease_lost', 'ok']);
		expect((await w.state(a.listingId)).currentStock).toBe('out_of_stock');
		expect((await w.state(b.listingId)).currentStock).toBe('in_stock');
	});

	it('refuses a batch that names one listing twice', async () => {
		const [a] = await claimKnown(1);
		const now = w.clock.now();
		await expect(
			recordPolls(
				w.db,
				[
					{ c: a, verdict: ok('in_stock'), now },
					{ c: a, verdict: ok('out_of_stock'), now }
				],
				{ random: () => 0.5 }
			)
		).rejects.toThrow(/once/);
		await w.db.update(listingStates).set({ leaseOwner: null }).where(eq(listingStates.listingId, a.listingId));
	});
});
