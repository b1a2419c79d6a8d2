/**
 * The adaptive plan's rules are our own (DEVELOPERS.md, Polling): a shop's requests per day stay what
 * the listings' own intervals give, every interval stays within [MIN_INTERVAL_MINUTES, own x
 * MAX_STRETCH], and the listings people wait for while sold out get the most polls.
 */
import { describe, expect, it } from 'vitest';
import { MAX_STRETCH, MIN_INTERVAL_MINUTES, planIntervals, type PlanInput } from '../../src/lib/poll-plan';
import type { StockPoint } from '../../src/lib/restock';

const H = 3_600_000;
const D = 24 * H;
const now = new Date(Date.UTC(2026, 3, 1));
const back = (ms: number) => new Date(now.getTime() - ms);

/** A listing that sold out every 2 days and came back after ~1 day, now sold out for `outFor`. */
function flipping(outFor: number): StockPoint[] {
	const pts: StockPoint[] = [];
	let t = now.getTime() - 40 * D;
	while (t + 3 * D <= now.getTime() - outFor - 2 * D) {
		pts.push({ at: new Date(t), stock: 'in_stock' });
		pts.push({ at: new Date(t + 2 * D), stock: 'out_of_stock' });
		t += 3 * D;
	}
	pts.push({ at: back(outFor + 2 * D), stock: 'in_stock' }, { at: back(outFor), stock: 'out_of_stock' });
	return pts;
}

function shop(): { inputs: PlanInput[]; current: Map<number, boolean | null> } {
	const inputs: PlanInput[] = [
		{ listingId: 1, shopId: 1, intervalMinutes: 60, watched: true, goodBand: true, points: flipping(20 * H) }, // waited for, due back
		{
			listingId: 2,
			shopId: 1,
			intervalMinutes: 60,
			watched: false,
			goodBand: false,
			points: [{ at: back(200 * D), stock: 'in_stock' }]
		}, // quiet
		...Array.from({ length: 8 }, (_, k) => ({
			listingId: 3 + k,
			shopId: 1,
			intervalMinutes: 60,
			watched: false,
			goodBand: false,
			points: [{ at: back(3 * D), stock: 'in_stock' as const }]
		})),
		{ listingId: 20, shopId: 2, intervalMinutes: 120, watched: false, goodBand: false, points: [] }
	];
	const current = new Map<number, boolean | null>(inputs.map((i) => [i.listingId, i.listingId !== 1]));
	return { inputs, current };
}

describe('planIntervals', () => {
	it('keeps each shop at its fixed-schedule requests per minute', () => {
		const { inputs, current } = shop();
		const plan = planIntervals(inputs, current, now);
		for (const shopId of [1, 2]) {
			const mine = inputs.filter((i) => i.shopId === shopId);
			const fixed = mine.reduce((n, i) => n + 1 / i.intervalMinutes, 0);
			const planned = mine.reduce(
				(n, i) => n + 1 / (current.get(i.listingId) ? plan.get(i.listingId)!.in : plan.get(i.listingId)!.out),
				0
			);
			expect(planned).toBeLessThanOrEqual(fixed * (1 + 1e-9));
			expect(planned).toBeGreaterThan(fixed * 0.99);
		}
	});

	it('polls the sold-out listing people wait for most, the quiet one least, all within bounds', () => {
		const { inputs, current } = shop();
		const plan = planIntervals(inputs, current, now);
		const waited = plan.get(1)!.out;
		const quiet = plan.get(2)!.in;
		const ordinary = plan.get(3)!.in;
		expect(waited).toBeLessThan(ordinary);
		expect(quiet).toBeGreaterThan(ordinary);
		for (const [id, p] of plan) {
			const own = inputs.find((i) => i.listingId === id)!.intervalMinutes;
			for (const m of [p.in, p.out]) {
				expect(m).toBeGreaterThanOrEqual(Math.min(MIN_INTERVAL_MINUTES, own));
				expect(m).toBeLessThanOrEqual(own * MAX_STRETCH);
			}
		}
		// A shop of one listing nobody waits for keeps its own interval.
		expect(plan.get(20)!.in).toBeCloseTo(120, 6);
	});

	it('gives a sold-out listing more polls when its outlook says a restock is near than when it is long overdue', () => {
		const due = planIntervals(
			[
				{ listingId: 1, shopId: 1, intervalMinutes: 60, watched: true, goodBand: false, points: flipping(20 * H) },
				{ listingId: 2, shopId: 1, intervalMinutes: 60, watched: true, goodBand: false, points: flipping(20 * D) }
			],
			new Map([
				[1, false],
				[2, false]
			]),
			now
		);
		expect(due.get(1)!.out).toBeLessThan(due.get(2)!.out);
	});
});
