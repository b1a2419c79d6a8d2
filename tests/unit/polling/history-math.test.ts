/**
 * Derived history figures against hand-computed values (time-weighted median, buyable share,
 * restocks, median restock duration) and step-preserving downsampling. Definitions are ours and
 * documented in src/lib/server/queries/history.ts; restock and buyable follow the design vocabulary.
 */
import { describe, expect, it } from 'vitest';
import { downsampleSteps, windowFigures, type ChangePoint } from '../../../src/lib/server/queries/history';

const DAY = 86_400_000;
const NOW = new Date('2026-03-01T00:00:00Z');
const at = (daysAgo: number) => new Date(NOW.getTime() - daysAgo * DAY);
const pt = (
	daysAgo: number,
	priceMinor: number | null,
	stock: ChangePoint['stock'],
	currency = 'EUR'
): ChangePoint => ({ at: at(daysAgo), priceMinor, currency, stock });

/** A scripted history (days ago, price, stock). */
const SCRIPT: ChangePoint[] = [
	pt(100, 3000, 'in_stock'),
	pt(80, 2800, 'out_of_stock'),
	pt(60, 2800, 'in_stock'), // restock 1
	pt(50, 2500, 'in_stock'),
	pt(40, 2500, 'out_of_stock'), // spell of 20 days
	pt(20, 2600, 'in_stock'), // restock 2
	pt(15, 2600, 'out_of_stock'), // spell of 5 days
	pt(10, 2600, 'unknown'), // a reading we could not map: counts in no stock figure
	pt(5, 2400, 'in_stock') // restock 3 (judged against the last KNOWN state, out_of_stock)
];

describe('windowFigures', () => {
	it('90 days: hand-computed', () => {
		const f = windowFigures(SCRIPT, at(90), NOW);
		// Price time (days): 2400:5, 2500:30, 2600:15, 2800:30, 3000:10 -> total 90, half 45, reached at 2600.
		expect(f.lowestMinor).toBe(2400);
		expect(f.medianMinor).toBe(2600);
		expect(f.currency).toBe('EUR');
		// Buyable 10+10+10+5+5 = 40 days of 85 with a known state.
		expect(f.buyableShare).toBeCloseTo(40 / 85, 10);
		expect(f.restocks).toBe(3);
		// Completed spells: 20 d and 5 d -> median 12.5 d = 300 h.
		expect(f.completedSpells).toBe(2);
		expect(f.typicalRestockHours).toBe(300);
		expect(f.coveredHours).toBe(90 * 24);
	});

	it('30 days: hand-computed', () => {
		const f = windowFigures(SCRIPT, at(30), NOW);
		// 2400:5, 2500:10, 2600:15 -> half 15 reached at 2500.
		expect(f.lowestMinor).toBe(2400);
		expect(f.medianMinor).toBe(2500);
		expect(f.buyableShare).toBeCloseTo(10 / 25, 10);
		expect(f.restocks).toBe(2);
		expect(f.completedSpells).toBe(1);
		expect(f.typicalRestockHours).toBe(120);
	});

	it('time before the first point is not counted, and an empty history has no figures', () => {
		const f = windowFigures([pt(10, 1000, 'in_stock')], at(30), NOW);
		expect(f.coveredHours).toBe(240);
		expect(f.buyableShare).toBe(1);
		expect(f.restocks).toBe(0);
		expect(windowFigures([], at(30), NOW)).toMatchObject({
			lowestMinor: null,
			medianMinor: null,
			buyableShare: null,
			restocks: 0,
			typicalRestockHours: null
		});
	});

	it('prices in another currency than the latest are left out rather than mixed', () => {
		const f = windowFigures([pt(20, 1000, 'in_stock', 'GBP'), pt(10, 1500, 'in_stock', 'EUR')], at(30), NOW);
		expect(f).toMatchObject({ currency: 'EUR', lowestMinor: 1500, medianMinor: 1500 });
	});

	it('an unknown reading between two buyable states is no restock', () => {
		const f = windowFigures([pt(20, 1000, 'in_stock'), pt(15, 1000, 'unknown'), pt(10, 1000, 'in_stock')], at(30), NOW);
		expect(f.restocks).toBe(0);
	});
});

describe('downsampleSteps', () => {
	it('keeps a year of hourly changes within the cap, with every extreme and both ends', () => {
		const from = at(365);
		const points: ChangePoint[] = [];
		for (let h = 0; h < 365 * 24; h++) {
			const price = 2000 + Math.round(300 * Math.sin(h / 50)) + (h === 4321 ? -900 : 0) + (h === 777 ? 900 : 0);
			points.push({
				at: new Date(from.getTime() + h * 3_600_000),
				priceMinor: price,
				currency: 'EUR',
				stock: h % 48 < 30 ? 'in_stock' : 'out_of_stock'
			});
		}
		const out = downsampleSteps(points, from, NOW, 300);
		expect(out.length).toBeLessThanOrEqual(300);
		expect(out.length).toBeGreaterThan(200);
		expect(out[0]).toBe(points[0]);
		expect(out[out.length - 1]).toBe(points[points.length - 1]);
		expect(Math.min(...out.map((p) => p.priceMinor!))).toBe(Math.min(...points.map((p) => p.priceMinor!)));
		expect(Math.max(...out.map((p) => p.priceMinor!))).toBe(Math.max(...points.map((p) => p.priceMinor!)));
		// Only real change points, in time order.
		for (let i = 1; i < out.length; i++) expect(out[i].at.getTime()).toBeGreaterThan(out[i - 1].at.getTime());
		expect(out.every((p) => points.includes(p))).toBe(true);
	});

	it('returns short histories as they are', () => {
		expect(downsampleSteps(SCRIPT, at(100), NOW, 300)).toBe(SCRIPT);
	});
});
