import { describe, expect, it } from 'vitest';
import {
	endsWithin,
	formatSpan,
	kaplanMeier,
	listingSpells,
	restockOutlook,
	survivalAt,
	type Spell,
	type StockPoint
} from '../../src/lib/restock';

const spells = (xs: Array<number | string>): Spell[] =>
	xs.map((x) =>
		typeof x === 'string' ? { duration: Number(x.replace('+', '')), censored: true } : { duration: x, censored: false }
	);

describe('kaplanMeier', () => {
	// Remission times in weeks of the 6-MP group of Freireich et al., "The effect of 6-mercaptopurine on
	// the duration of steroid-induced remissions in acute leukemia", Blood 21(6):699-716, 1963
	// (+ = censored), the classic worked example of the product-limit estimator (e.g. Kleinbaum & Klein,
	// "Survival Analysis: A Self-Learning Text", chapter 2). Published table: S(6) = 0.857,
	// S(7) = 0.807, S(10) = 0.753, S(13) = 0.690, S(16) = 0.627, S(22) = 0.538, S(23) = 0.448; median 23.
	const sixMp = spells([
		6,
		6,
		6,
		'6+',
		7,
		'9+',
		10,
		'10+',
		'11+',
		13,
		16,
		'17+',
		'19+',
		'20+',
		22,
		23,
		'25+',
		'32+',
		'32+',
		'34+',
		'35+'
	]);

	it('reproduces the published 6-MP table', () => {
		const km = kaplanMeier(sixMp);
		expect(km.steps.map((s) => s.t)).toEqual([6, 7, 10, 13, 16, 22, 23]);
		expect(km.steps.map((s) => s.atRisk)).toEqual([21, 17, 15, 12, 11, 7, 6]);
		expect(km.steps.map((s) => s.events)).toEqual([3, 1, 1, 1, 1, 1, 1]);
		const published = [0.857, 0.807, 0.753, 0.69, 0.627, 0.538, 0.448];
		km.steps.forEach((s, i) => expect(s.survival).toBeCloseTo(published[i], 3));
		expect(km.median).toBe(23);
		expect(km.events).toBe(9);
		expect(km.spells).toBe(21);
	});

	it("gives the plain empirical median with no censoring (the same study's placebo group: median 8 weeks)", () => {
		// Placebo group of Freireich et al. (1963), no censoring; S(8) = 8/21 = 0.381 in the same textbook table.
		const km = kaplanMeier(spells([1, 1, 2, 2, 3, 4, 4, 5, 5, 8, 8, 8, 8, 11, 11, 12, 12, 15, 17, 22, 23]));
		expect(km.median).toBe(8);
		expect(survivalAt(km, 8)).toBeCloseTo(0.381, 3);
		expect(survivalAt(km, 7.9)).toBeCloseTo(12 / 21, 10);
	});

	it('matches the illustration in Kaplan and Meier (1958), section 1 (value from memory, products recomputed by hand)', () => {
		// 8 items: deaths at 0.8, 3.1, 5.4, 9.2; losses at 1.0, 2.7, 7.0, 12.1.
		// 7/8 = 0.875; x 4/5 = 0.700; x 3/4 = 0.525; x 1/2 = 0.2625.
		const km = kaplanMeier(spells([0.8, '1.0+', '2.7+', 3.1, 5.4, '7.0+', 9.2, '12.1+']));
		expect(km.steps.map((s) => s.survival)).toEqual([0.875, 0.7, 0.525, 0.2625].map((x) => expect.closeTo(x, 10)));
		expect(km.median).toBe(9.2);
	});

	it('takes events before censorings at a tied time, and has no median when S stays above one half', () => {
		const km = kaplanMeier(spells([5, '5+', '9+', '9+']));
		expect(km.steps).toHaveLength(1);
		expect(km.steps[0]).toMatchObject({ t: 5, atRisk: 4, events: 1, censored: 1 });
		expect(km.median).toBeNull();
		expect(kaplanMeier([]).median).toBeNull();
		expect(() => kaplanMeier([{ duration: -1, censored: false }])).toThrow(RangeError);
	});

	it('endsWithin is the conditional chance 1 - S(a + h) / S(a)', () => {
		const km = kaplanMeier(spells([1, 2, 3, 4]));
		expect(endsWithin(km, 0, 2)).toBeCloseTo(0.5, 10);
		expect(endsWithin(km, 2, 1)).toBeCloseTo(0.5, 10); // S(2) = 0.5, S(3) = 0.25
		expect(endsWithin(km, 4, 10)).toBeNull(); // outlived every past spell
	});
});

const H = 3_600_000;
const D = 24 * H;
const t0 = Date.UTC(2026, 0, 1);
const at = (ms: number, stock: StockPoint['stock']): StockPoint => ({ at: new Date(t0 + ms), stock });

describe('listingSpells', () => {
	it('skips the starting state and unknown readings, and censors the running spell', () => {
		const pts = [
			at(0, 'out_of_stock'), // start of history: not a spell
			at(2 * D, 'in_stock'),
			at(3 * D, 'unknown'),
			at(4 * D, 'in_stock'),
			at(5 * D, 'out_of_stock'),
			at(8 * D, 'preorder'), // buyable
			at(9 * D, 'backorder') // not buyable
		];
		const s = listingSpells(pts, new Date(t0 + 12 * D));
		expect(s.in).toEqual([
			{ duration: 3 * D, censored: false, end: t0 + 5 * D },
			{ duration: 1 * D, censored: false, end: t0 + 9 * D }
		]);
		expect(s.out).toEqual([
			{ duration: 3 * D, censored: false, end: t0 + 8 * D },
			{ duration: 3 * D, censored: true, end: t0 + 12 * D }
		]);
		expect(s.current).toMatchObject({ buyable: false, spellStarted: true });
	});

	it('says nothing without a known state', () => {
		expect(listingSpells([at(0, 'unknown')], new Date(t0 + D)).current).toBeNull();
	});
});

describe('restockOutlook', () => {
	// Six sold-out spells of 10, 11, 12, 13, 14, 15 days and in-stock spells of 20, 30, 40 hours...
	function history(outDays: number[], inHours: number[], endOut = true) {
		const pts: StockPoint[] = [at(0, 'in_stock')];
		let t = 0;
		for (let i = 0; i < outDays.length; i++) {
			t += (inHours[i] ?? 24) * H;
			pts.push(at(t, 'out_of_stock'));
			if (i === outDays.length - 1 && endOut) break;
			t += outDays[i] * D;
			pts.push(at(t, 'in_stock'));
		}
		return { pts, last: t };
	}

	it('writes the outlook with medians and sample sizes', () => {
		const { pts, last } = history([10, 11, 12, 13, 14, 15, 99], [20, 30, 40, 30, 20, 30, 30]);
		const o = restockOutlook(pts, new Date(t0 + last + 9 * D));
		expect(o.state).toBe('out');
		expect(o.restock).toEqual({ medianMs: 12 * D, spells: 6 });
		expect(o.sellout.spells).toBe(6); // the first in-stock reading starts history, not a spell
		expect(o.sellout.medianMs).toBe(30 * H);
		expect(o.text).toBe(
			'Out of stock for 9 days. Here, past restocks came after a median of 12 days (6 spells); once back, half sold out within 30 hours.'
		);
	});

	it('says nothing with fewer than 3 finished spells', () => {
		const { pts, last } = history([10, 11, 99], [20, 30, 30]);
		const o = restockOutlook(pts, new Date(t0 + last + D));
		expect(o.restock.spells).toBe(2);
		expect(o.text).toBeNull();
	});

	it('a long current spell is censored and lifts the median', () => {
		// Finished: 2, 4, 6 days; current: sold out for 30 days. KM: S(2)=3/4, S(4)=2/4, median 4 days.
		const { pts, last } = history([2, 4, 6, 99], [24, 24, 24, 24]);
		const o = restockOutlook(pts, new Date(t0 + last + 30 * D));
		expect(o.restock).toEqual({ medianMs: 4 * D, spells: 3 });
		expect(o.text).toContain('Out of stock for 4 weeks.');
	});
});

describe('formatSpan', () => {
	it('hours, days, weeks', () => {
		expect(formatSpan(30 * H)).toBe('30 hours');
		expect(formatSpan(1 * H)).toBe('1 hour');
		expect(formatSpan(12 * D)).toBe('12 days');
		expect(formatSpan(30 * D)).toBe('4 weeks');
	});
});

describe('shopRecordLine (our thresholds)', () => {
	it('says the restock gap and how often the shop delists', async () => {
		const { shopRecordLine } = await import('../../src/lib/shop-record');
		expect(shopRecordLine({ medianRestockGapMs: 9 * D, delistings: 0, listings: 12, failedPollShare: 0.01 })).toBe(
			'usually restocks within 2 weeks; delists rarely'
		);
		expect(shopRecordLine({ medianRestockGapMs: null, delistings: 4, listings: 10, failedPollShare: 0.3 })).toBe(
			'delists often; its pages often fail to load for us'
		);
		expect(shopRecordLine({ medianRestockGapMs: null, delistings: 0, listings: 0, failedPollShare: null })).toBeNull();
	});
});
