/**
 * The adaptive plan's stock history comes from one bounded query (loadStockTurns: spell boundaries
 * and the latest change point per listing, computed in SQL) instead of every change point of a year.
 * Checked against the whole history read the plain way: the same spells (listingSpells), the same
 * last change and the same planned intervals, with far fewer rows. The rules are our own
 * (DEVELOPERS.md, Polling); the Kaplan-Meier figures themselves are checked in tests/unit/restock.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, asc, eq, gte, isNull } from 'drizzle-orm';
import { freshDatabase } from './helpers/db';
import { seedDemo } from '../../src/lib/server/db/seed';
import { listings, listingStates, observations, revisions, type StockState } from '../../src/lib/server/db/schema';
import { bandRank } from '../../src/lib/components/bands';
import { HISTORY_DAYS, loadPlanInputs, loadStockTurns } from '../../src/lib/server/polling/plan';
import { listingSpells, type StockPoint } from '../../src/lib/restock';
import { planIntervals } from '../../src/lib/poll-plan';

const NOW = new Date('2026-06-01T12:00:00.000Z');
const HOUR = 3_600_000;
let database: Awaited<ReturnType<typeof freshDatabase>>;

beforeAll(async () => {
	database = await freshDatabase('sg_it_poll_plan_inputs');
	await seedDemo(database.db, { shopsPort: 1, historyDays: 120, now: NOW });
	// One listing with what the seed rarely has: price changes within a spell, 'unknown' readings
	// between and inside spells, equal timestamps, points older than the window, and a last change
	// point that is a price change.
	const [l] = await database.db.select({ id: listings.id }).from(listings).orderBy(asc(listings.id)).limit(1);
	await database.db.delete(observations).where(eq(observations.listingId, l.id));
	const at = (hoursAgo: number) => new Date(NOW.getTime() - hoursAgo * HOUR);
	const rows: Array<[number, StockState, number]> = [
		[24 * (HISTORY_DAYS + 20), 'in_stock', 1000], // outside the window
		[24 * (HISTORY_DAYS + 10), 'out_of_stock', 1000], // outside the window
		[900, 'unknown', 1000],
		[800, 'out_of_stock', 1000],
		[790, 'out_of_stock', 1100], // price only
		[700, 'unknown', 1100],
		[650, 'backorder', 1100], // still not buyable
		[600, 'in_stock', 1100], // restock
		[600, 'in_stock', 1050], // same instant, price only
		[500, 'preorder', 1050], // still buyable
		[400, 'unknown', 1050],
		[300, 'out_of_stock', 1050], // sell-out
		[200, 'in_stock', 990], // restock
		[100, 'in_stock', 990], // same state again
		[10, 'in_stock', 950] // last change point: a price drop
	];
	await database.db.insert(observations).values(
		rows.map(([hoursAgo, stock, priceMinor]) => ({
			listingId: l.id,
			observedAt: at(hoursAgo),
			stock,
			priceMinor,
			currency: 'USD'
		}))
	);
	await database.db.update(listingStates).set({ currentStock: 'in_stock' }).where(eq(listingStates.listingId, l.id));
}, 120_000);
afterAll(async () => {
	await database?.close();
});

/** Every change point of the window, the plain way (what the planner read before). */
async function wholeHistory(): Promise<Map<number, StockPoint[]>> {
	const since = new Date(NOW.getTime() - HISTORY_DAYS * 86_400_000);
	const points = await database.db
		.select({ listingId: observations.listingId, at: observations.observedAt, stock: observations.stock })
		.from(observations)
		.innerJoin(listings, eq(listings.id, observations.listingId))
		.where(and(eq(listings.active, true), isNull(listings.delistedAt), gte(observations.observedAt, since)))
		.orderBy(asc(observations.listingId), asc(observations.observedAt), asc(observations.id));
	const out = new Map<number, StockPoint[]>();
	for (const p of points) out.set(p.listingId, [...(out.get(p.listingId) ?? []), { at: p.at, stock: p.stock }]);
	return out;
}

describe('loadStockTurns', () => {
	it('gives every listing the same spells and last change as its whole history, in fewer rows', async () => {
		const [turns, whole] = await Promise.all([loadStockTurns(database.db, NOW), wholeHistory()]);
		expect(whole.size).toBeGreaterThan(10);
		expect([...turns.keys()].sort()).toEqual([...whole.keys()].sort());
		let wholeRows = 0;
		let turnRows = 0;
		let withSpells = 0;
		for (const [id, points] of whole) {
			const mine = turns.get(id)!;
			wholeRows += points.length;
			turnRows += mine.length;
			const expected = listingSpells(points, NOW);
			expect(listingSpells(mine, NOW), `listing ${id}`).toEqual(expected);
			expect(mine.at(-1)!.at.getTime(), `listing ${id}: last change`).toBe(points.at(-1)!.at.getTime());
			if (expected.out.length + expected.in.length >= 3) withSpells++;
		}
		expect(withSpells).toBeGreaterThan(0);
		expect(turnRows).toBeLessThan(wholeRows);
	});

	it('reads the hand-made history as its spells: 2 restocks, 2 sell-outs, price changes and unknowns left out', async () => {
		const [l] = await database.db.select({ id: listings.id }).from(listings).orderBy(asc(listings.id)).limit(1);
		const mine = (await loadStockTurns(database.db, NOW)).get(l.id)!;
		// First known reading (800 h ago), restock (600), sell-out (300), restock (200) and the last
		// change point (10 h ago, a price drop).
		expect(mine.map((p) => [(NOW.getTime() - p.at.getTime()) / HOUR, p.stock])).toEqual([
			[800, 'out_of_stock'],
			[600, 'in_stock'],
			[300, 'out_of_stock'],
			[200, 'in_stock'],
			[10, 'in_stock']
		]);
		const spells = listingSpells(mine, NOW);
		expect(spells.out.map((s) => s.duration / HOUR)).toEqual([100]);
		expect(spells.in.map((s) => [s.duration / HOUR, s.censored])).toEqual([
			[300, false],
			[200, true]
		]);
	});

	it('plans the same intervals from the bounded inputs as from the whole history', async () => {
		const { inputs, current } = await loadPlanInputs(database.db, NOW);
		const whole = await wholeHistory();
		const plain = inputs.map((i) => ({ ...i, points: whole.get(i.listingId) ?? [] }));
		expect(planIntervals(inputs, current, NOW)).toEqual(planIntervals(plain, current, NOW));
	});

	it('waits for listings of converters with a current revision graded Close or better, and only those', async () => {
		const { inputs } = await loadPlanInputs(database.db, NOW);
		const revs = await database.db
			.select({ converterId: revisions.converterId, band: revisions.band })
			.from(revisions)
			.where(and(isNull(revisions.seenTo), isNull(revisions.retiredAt)));
		const good = new Set(revs.filter((r) => bandRank(r.band) <= bandRank('close')).map((r) => r.converterId));
		const converterOf = new Map(
			(await database.db.select({ id: listings.id, converterId: listings.converterId }).from(listings)).map((l) => [
				l.id,
				l.converterId
			])
		);
		const flags = inputs.map((i) => [i.listingId, good.has(converterOf.get(i.listingId)!)]);
		expect(inputs.map((i) => [i.listingId, i.goodBand])).toEqual(flags);
		// The demo catalogue has both kinds, so the check can tell them apart.
		expect(new Set(flags.map(([, g]) => g))).toEqual(new Set([true, false]));
	});
});
