import { describe, expect, it } from 'vitest';
import {
	LevelInputError,
	RUBRIC,
	analyzeLevels,
	bandRank,
	readingsLookLikeVolts,
	type Band
} from '../../../src/lib/levels';
import { perfectExcept, ramp } from './helpers';

const codes = (r: ReturnType<typeof analyzeLevels>) => r.findings.map((f) => f.code);

describe('reference levels (common practice: 7 mV per IRE, 700 mV at 100 IRE; no published RGB standard defines it)', () => {
	it('expects 7 mV per IRE at the default 700 mV full scale', () => {
		const r = analyzeLevels(ramp());
		expect(r.fullScaleMv).toBe(700);
		expect(r.steps.map((s) => s.expectedMv)).toEqual([0, 70, 140, 210, 280, 350, 420, 490, 560, 630, 700]);
	});
	it('scales with fullScaleMv (here 1000 mV: 10 mV per IRE)', () => {
		const r = analyzeLevels(ramp((i) => [10 * i, 10 * i, 10 * i], 1000));
		expect(r.mvPerIre).toBe(10);
		expect(r.band).toBe('exact');
	});
	it('reports deviation in mV and IRE per channel, and spread in IRE', () => {
		const r = analyzeLevels(perfectExcept(50, [357, 350, 343]));
		const s = r.steps.find((x) => x.ire === 50)!;
		expect(s.deviationMv).toEqual({ r: 7, g: 0, b: -7 });
		expect(s.deviationIre).toEqual({ r: 1, g: 0, b: -1 });
		expect(s.spreadIre).toBe(2);
	});
});

describe('trade rules of thumb (common practice, no published source)', () => {
	it('a perfect ramp is exact, dE00 ~ 0, score 100, with a positive finding', () => {
		const r = analyzeLevels(ramp());
		expect(r.band).toBe('exact');
		expect(r.score).toBe(100);
		expect(r.worstDeltaE00).toBeLessThan(1e-9);
		for (const s of r.steps) expect(s.deltaE00).toBeLessThan(1e-9);
		expect(r.findings[0]).toMatchObject({ code: 'levels-right', severity: 'positive' });
		expect(r.findings[0].text).toMatch(/^Levels are right/);
		expect(r.warnings).toEqual([]);
		expect(r.tint.white.direction).toBe('neutral');
		expect(r.rubricVersion).toBe('sg-levels-2');
	});

	it.each([25, 30])(
		'%i mV at 10 IRE (where 70 mV is expected) is failing, with a shadows finding citing the numbers',
		(mv) => {
			const r = analyzeLevels(perfectExcept(10, [mv, mv, mv]));
			expect(r.band).toBe('failing');
			expect(r.failReasons).toContain('shadow-floor');
			const f = r.findings.find((x) => x.code === 'shadows-dark')!;
			expect(f.severity).toBe('critical');
			expect(f.text).toContain(`Shadows too dark: ${mv} mV at 10 IRE where 70 mV is expected`);
			expect(r.shadowRatio.at10.g).toBeCloseTo(mv / 70, 10);
		}
	);

	it("blue at 770 mV with red and green at 700 mV at 100 IRE is at best 'poor' and the tint says blue", () => {
		const r = analyzeLevels(perfectExcept(100, [700, 700, 770]));
		expect(bandRank(r.band!)).toBeGreaterThanOrEqual(bandRank('poor'));
		expect(r.tint.white.direction).toBe('blue');
		expect(r.tint.white.words).toMatch(/blue cast$/);
		expect(r.tint.summary).toMatch(/White has a .*blue cast/);
		const f = r.findings.find((x) => x.code === 'channel-high')!;
		expect(f.text).toContain('Blue runs high: 770 mV at 100 IRE where red and green read 700 mV');
		// the whole ramp with blue 10 % high: also blue, mid grey too
		const all = analyzeLevels(ramp((i) => [7 * i, 7 * i, 7.7 * i]));
		expect(bandRank(all.band!)).toBeGreaterThanOrEqual(bandRank('poor'));
		expect(all.tint.midGrey.direction).toBe('blue');
	});

	it('doubled readings (about 1400 mV at white: no 75 ohm load, which halves the level into a matched load) are not graded', () => {
		// A 75 ohm source into 75 ohm delivers half its open-circuit voltage (voltage divider); without the load the scope reads double.
		const r = analyzeLevels(ramp((i) => [14 * i, 14 * i, 14 * i]));
		expect(r.warnings).toContain('possibly-unterminated');
		expect(r).toMatchObject({
			graded: false,
			notGradedReason: 'unterminated',
			band: null,
			score: null,
			failReasons: []
		});
		expect(r.findings[0].code).toBe('possibly-unterminated');
		expect(r.findings[0].severity).toBe('critical');
		expect(r.findings[0].text).toMatch(/^Not graded: white reads 1400 mV, about twice the 700 mV expected/);
		expect(r.findings[0].text).toContain('Measure again into 75 ohm');
		// nothing is judged against the wrong scale: no shadow, highlight or level findings
		expect(codes(r)).toEqual(['possibly-unterminated']);
		// even when the doubled run also has crushed shadows (25 mV doubled to 50 at 10 IRE)
		const crushed = analyzeLevels(ramp((i) => (i === 10 ? [50, 50, 50] : [14 * i, 14 * i, 14 * i])));
		expect(crushed.band).toBeNull();
		expect(codes(crushed)).not.toContain('shadows-dark');
		// missing steps are still said (they do not depend on the scale)
		const missing = analyzeLevels({ steps: ramp((i) => [14 * i, 14 * i, 14 * i]).steps.filter((s) => s.ire !== 30) });
		expect(codes(missing)).toEqual(['possibly-unterminated', 'missing-steps']);
		// 1.1 x full scale is a hot converter, graded as such
		const hot = analyzeLevels(ramp((i) => [7.7 * i, 7.7 * i, 7.7 * i]));
		expect(hot.warnings).not.toContain('possibly-unterminated');
		expect(hot.graded).toBe(true);
		expect(hot.band).not.toBeNull();
	});
});

describe('band edges (house rubric sg-levels-1, RUBRIC.bands; our own, not a standard)', () => {
	// Deviation edges: all three channels moved together at 50 IRE, so spread stays 0.
	const devCases: Array<[number, Band]> = [
		[1.0, 'exact'],
		[1.01, 'close'],
		[2.0, 'close'],
		[2.01, 'fair'],
		[3.5, 'fair'],
		[3.51, 'poor'],
		[6.0, 'poor'],
		[6.01, 'failing']
	];
	it.each(devCases)('worst deviation %f IRE (spread 0) -> %s', (dev, band) => {
		const mv = 350 + 7 * dev;
		const r = analyzeLevels(perfectExcept(50, [mv, mv, mv]));
		expect(r.worstSpreadIre).toBe(0);
		expect(r.band).toBe(band);
	});
	it.each(devCases.map(([d, b]) => [-d, b] as [number, Band]))('worst deviation %f IRE (below) -> %s', (dev, band) => {
		const mv = 350 + 7 * dev;
		expect(analyzeLevels(perfectExcept(50, [mv, mv, mv])).band).toBe(band);
	});

	// Spread edges: red +s/2, blue -s/2 at 50 IRE, so deviation s/2 is inside each band's deviation limit.
	const spreadCases: Array<[number, Band]> = [
		[1.0, 'exact'],
		[1.01, 'close'],
		[1.5, 'close'],
		[1.51, 'fair'],
		[2.5, 'fair'],
		[2.51, 'poor'],
		[4.0, 'poor'],
		[4.01, 'failing']
	];
	it.each(spreadCases)('worst spread %f IRE -> %s', (spread, band) => {
		const half = (7 * spread) / 2;
		const r = analyzeLevels(perfectExcept(50, [350 + half, 350, 350 - half]));
		expect(r.worstSpreadIre).toBeCloseTo(spread, 10);
		expect(r.band).toBe(band);
	});

	it('a band needs both conditions: deviation 0.9 but spread 1.8 is fair, not exact', () => {
		const r = analyzeLevels(perfectExcept(50, [350 + 6.3, 350, 350 - 6.3]));
		expect(r.worstDeviationIre).toBeCloseTo(0.9, 10);
		expect(r.band).toBe('fair');
	});

	it('shadow floor: 42.0 mV at 10 IRE (60 % of 70) is poor by deviation; 41.9 mV is failing', () => {
		expect(RUBRIC.shadowFloorRatio).toBe(0.6);
		const at = analyzeLevels(perfectExcept(10, [42, 42, 42]));
		expect(at.band).toBe('poor');
		const below = analyzeLevels(perfectExcept(10, [41.9, 42, 42]));
		expect(below.band).toBe('failing');
		expect(below.failReasons).toEqual(['shadow-floor']);
	});

	it('monotonicity: 50 IRE equal to 40 IRE is allowed (poor here); 0.1 mV lower fails', () => {
		const eq = analyzeLevels(ramp((i) => (i === 40 || i === 50 ? [315, 315, 315] : [7 * i, 7 * i, 7 * i])));
		expect(eq.band).toBe('poor');
		expect(eq.monotonic).toEqual({ r: true, g: true, b: true });
		const dip = analyzeLevels(
			ramp((i) => (i === 40 ? [315, 315, 315] : i === 50 ? [315, 314.9, 315] : [7 * i, 7 * i, 7 * i]))
		);
		expect(dip.band).toBe('failing');
		expect(dip.failReasons).toEqual(['non-monotonic']);
		expect(dip.warnings).toContain('non-monotonic');
		expect(dip.monotonic).toEqual({ r: true, g: false, b: true });
		expect(dip.nonMonotonicSteps).toEqual([{ channel: 'g', ire: 50, mv: 314.9, belowIre: 40, belowMv: 315 }]);
		expect(dip.findings.find((f) => f.code === 'non-monotonic')!.text).toContain(
			'314.9 mV at 50 IRE is below 315 mV at 40 IRE'
		);
	});
});

describe('score', () => {
	it('orders converters within a band: more deviation, lower score', () => {
		const a = analyzeLevels(perfectExcept(50, [353, 353, 353]));
		const b = analyzeLevels(perfectExcept(50, [356, 356, 356]));
		expect(a.band).toBe('exact');
		expect(b.band).toBe('exact');
		expect(a.score!).toBeGreaterThan(b.score!);
	});
	it('penalises spread at equal worst deviation', () => {
		const same = analyzeLevels(perfectExcept(50, [357, 357, 357]));
		const split = analyzeLevels(perfectExcept(50, [357, 350, 350]));
		const apart = analyzeLevels(perfectExcept(50, [357, 350, 343]));
		expect(same.score).toBeGreaterThan(0);
		expect(split.score!).toBeGreaterThan(apart.score!);
	});
	it('stays within 0..100', () => {
		expect(analyzeLevels(ramp((i) => [0, 0, 19 * i])).score).toBe(0);
	});
});

describe('ratios, tint and findings', () => {
	it('shadow and highlight ratios at 10, 20, 90 and 100 IRE', () => {
		const r = analyzeLevels(ramp((i) => [7 * i * (i <= 20 ? 0.5 : 1), 7 * i, 7 * i]));
		expect(r.shadowRatio.at10.r).toBeCloseTo(0.5, 10);
		expect(r.shadowRatio.at20!.r).toBeCloseTo(0.5, 10);
		expect(r.highlightRatio.at90!.g).toBeCloseTo(1, 10);
		expect(r.highlightRatio.at100.b).toBeCloseTo(1, 10);
	});

	it.each([
		['red', [735, 700, 700]],
		['green', [700, 735, 700]],
		['blue', [700, 700, 735]],
		['yellow', [735, 735, 700]],
		['cyan', [700, 735, 735]],
		['magenta', [735, 700, 735]]
	] as const)('white with a %s excess reads as a %s cast', (dir, rgb) => {
		const r = analyzeLevels(perfectExcept(100, [...rgb]));
		expect(r.tint.white.direction).toBe(dir);
		expect(r.tint.midGrey.direction).toBe('neutral');
	});

	it('cast size in words follows the chroma thresholds (RUBRIC.tint)', () => {
		const tiny = analyzeLevels(perfectExcept(100, [700, 700, 701]));
		expect(tiny.tint.white).toMatchObject({ direction: 'neutral', size: 'none', words: 'neutral' });
		const slight = analyzeLevels(perfectExcept(100, [700, 700, 707]));
		expect(slight.tint.white.size).toBe('slight');
		expect(slight.tint.white.chroma).toBeGreaterThanOrEqual(RUBRIC.tint.neutralBelowChroma);
		const clear = analyzeLevels(perfectExcept(100, [700, 700, 735]));
		expect(clear.tint.white.words).toBe('clear blue cast');
		const strong = analyzeLevels(perfectExcept(100, [700, 700, 770]));
		expect(strong.tint.white.words).toBe('strong blue cast');
		expect(strong.tint.white.chroma).toBeGreaterThanOrEqual(RUBRIC.tint.strongFromChroma);
		expect(strong.tint.white.hueDeg).toBeGreaterThan(250);
		expect(strong.tint.white.hueDeg).toBeLessThan(320);
	});

	it('highlights clipped: 90 and 100 IRE both at 690 mV', () => {
		const r = analyzeLevels(ramp((i) => (i >= 90 ? [690, 690, 690] : [7 * i, 7 * i, 7 * i])));
		const f = r.findings.find((x) => x.code === 'highlights-clipped')!;
		expect(f.text).toContain('690');
		expect(f.text).toContain('detail near white is lost');
	});

	it('highlights dim and too bright, citing the 100 IRE reading', () => {
		const dim = analyzeLevels(ramp((i) => [6.5 * i, 6.5 * i, 6.5 * i]));
		expect(dim.findings.find((x) => x.code === 'highlights-dim')!.text).toContain(
			'Highlights dim: 650 mV at 100 IRE where 700 mV is expected'
		);
		const hot = analyzeLevels(ramp((i) => [7.6 * i, 7.6 * i, 7.6 * i]));
		expect(hot.findings.find((x) => x.code === 'highlights-hot')!.text).toContain('760 mV at 100 IRE');
	});

	it('black and shadows lifted', () => {
		const r = analyzeLevels(ramp((i) => [7 * i + 21, 7 * i + 21, 7 * i + 21]));
		expect(codes(r)).toContain('black-lifted');
		expect(r.findings.find((x) => x.code === 'black-lifted')!.text).toContain('21 mV at 0 IRE where 0 mV is expected');
		expect(codes(r)).toContain('shadows-lifted');
	});

	it('a channel running low is named', () => {
		const r = analyzeLevels(ramp((i) => [6.6 * i, 7 * i, 7 * i]));
		expect(r.findings.find((x) => x.code === 'channel-low')!.text).toMatch(/^Red runs low: 660 mV at 100 IRE/);
	});

	it('missing steps are allowed, reported and named', () => {
		const input = ramp();
		input.steps = input.steps.filter((s) => s.ire !== 30 && s.ire !== 70);
		const r = analyzeLevels(input);
		expect(r.missingSteps).toEqual([30, 70]);
		expect(r.warnings).toContain('missing-steps');
		expect(r.findings.find((x) => x.code === 'missing-steps')!.text).toContain('30 and 70 IRE');
		expect(r.steps).toHaveLength(9);
		expect(r.band).toBe('exact');
		const sparse = analyzeLevels({ steps: ramp().steps.filter((s) => [0, 10, 50, 100].includes(s.ire)) });
		expect(sparse.shadowRatio.at20).toBeNull();
		expect(sparse.highlightRatio.at90).toBeNull();
	});

	it('accepts steps in any order', () => {
		const input = ramp();
		input.steps.reverse();
		expect(analyzeLevels(input).steps.map((s) => s.ire)).toEqual([0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100]);
	});

	it('display options change the visible difference but not the band', () => {
		const input = perfectExcept(10, [60, 60, 60]);
		const a = analyzeLevels(input);
		const b = analyzeLevels(input, { lb: 0, lw: 200 });
		expect(a.band).toBe(b.band);
		expect(a.display).toMatchObject({ lw: 100, lb: 0.1, gamma: 2.4 });
		expect(a.worstDeltaE00).not.toBeCloseTo(b.worstDeltaE00, 3);
		expect(a.worstDeltaE00AtIre).toBe(10);
	});
});

describe('bad input', () => {
	const bad = (input: unknown, re: RegExp) => {
		let err: unknown;
		try {
			analyzeLevels(input as never);
		} catch (e) {
			err = e;
		}
		expect(err).toBeInstanceOf(LevelInputError);
		expect((err as Error).message).toMatch(re);
	};
	it('NaN and non-finite readings', () => {
		bad(perfectExcept(50, [NaN, 350, 350]), /step 50 IRE.*red reading must be a finite number/);
		bad(perfectExcept(50, [350, Infinity, 350]), /green reading must be a finite number/);
		bad(perfectExcept(50, [350, 350, '350' as unknown as number]), /blue reading must be a finite number/);
	});
	it('black a little below blanking is a reading; beyond the rubric tolerance (1 IRE, 7 mV at 700 mV) it is refused, and so are absurd readings', () => {
		// Scopes read a few mV either side of 0 at black (common practice).
		expect(analyzeLevels(perfectExcept(0, [-1, 0, 0])).band).toBe('exact');
		const near = analyzeLevels(perfectExcept(0, [-6.5, -7, -3]));
		expect(near.graded).toBe(true);
		expect(near.steps[0].g).toBe(-7);
		bad(perfectExcept(0, [-7.5, 0, 0]), /step 0 IRE: red reads -7.5 mV, more than 7 mV \(1 IRE\) below blanking/);
		bad(perfectExcept(0, [-50, 0, 0]), /red reads -50 mV, more than 7 mV/);
		// the tolerance is 1 IRE of the run's own full scale: 10 mV at 1000 mV
		expect(analyzeLevels(ramp((i) => [10 * i - (i === 0 ? 9 : 0), 10 * i, 10 * i], 1000)).graded).toBe(true);
		bad(
			ramp((i) => [10 * i - (i === 0 ? 11 : 0), 10 * i, 10 * i], 1000),
			/more than 10 mV/
		);
		bad(perfectExcept(100, [700, 2500, 700]), /above 2000 mV/);
	});
	it('readings that look like volts are refused, never graded as millivolts', () => {
		bad(
			ramp((i) => [0.007 * i, 0.007 * i, 0.007 * i]),
			/look like volts \(white reads 0.7\): enter millivolts, e.g. 700 for 0.7 V/
		);
		// unterminated volts (1.4 at white) too
		bad(
			ramp((i) => [0.014 * i, 0.014 * i, 0.014 * i]),
			/look like volts/
		);
		expect(readingsLookLikeVolts(ramp((i) => [0.007 * i, 0.007 * i, 0.0071 * i]).steps)).toBe(true);
		// a dead output (every step near 0 mV) is a reading, not volts: it grades failing
		expect(readingsLookLikeVolts(ramp(() => [0.2, 0.2, 0.2]).steps)).toBe(false);
		expect(analyzeLevels(ramp(() => [0.2, 0.2, 0.2])).band).toBe('failing');
		expect(readingsLookLikeVolts(ramp().steps)).toBe(false);
	});
	it('duplicate and unknown steps', () => {
		const dup = ramp();
		dup.steps.push({ ire: 50, r: 350, g: 350, b: 350 });
		bad(dup, /duplicate step 50 IRE/);
		bad({ steps: [...ramp().steps, { ire: 15, r: 1, g: 1, b: 1 }] }, /unknown step 15 IRE/);
		bad({ steps: [...ramp().steps.slice(0, 10), { ire: 110, r: 770, g: 770, b: 770 }] }, /unknown step 110 IRE/);
		bad({ steps: [...ramp().steps, { ire: NaN, r: 1, g: 1, b: 1 }] }, /ire must be a finite number/);
	});
	it('too few steps: 0, 10, 50 and 100 are required', () => {
		bad({ steps: ramp().steps.filter((s) => s.ire !== 50) }, /too few steps: 50 IRE missing/);
		bad({ steps: ramp().steps.filter((s) => s.ire !== 0 && s.ire !== 100) }, /0 IRE, 100 IRE missing/);
	});
	it('empty input', () => {
		bad({ steps: [] }, /no readings/);
		bad(null, /input is empty/);
		bad({}, /steps must be a list/);
	});
	it('bad fullScaleMv', () => {
		bad({ ...ramp(), fullScaleMv: 0 }, /fullScaleMv must be at least/);
		bad({ ...ramp(), fullScaleMv: -700 }, /fullScaleMv must be at least/);
		bad({ ...ramp(), fullScaleMv: NaN }, /fullScaleMv must be a finite number/);
		bad({ ...ramp(), fullScaleMv: 5000 }, /fullScaleMv must be at most/);
	});
	it('lists every problem in issues', () => {
		expect.assertions(1);
		try {
			analyzeLevels(ramp((i) => (i === 20 ? [NaN, -3000, 3000] : [7 * i, 7 * i, 7 * i])));
		} catch (e) {
			expect((e as LevelInputError).issues).toHaveLength(3);
		}
	});
});

describe('findings explain every grade below Close', () => {
	it('a uniform 3 % shortfall (fair) names the worst step and its numbers (7 mV per IRE: common practice)', () => {
		// 0.97 x expected everywhere: 679 mV at 100 IRE is 21 mV = 3.0 IRE under 700 mV.
		const r = analyzeLevels(ramp((i) => [6.79 * i, 6.79 * i, 6.79 * i]));
		expect(r.band).toBe('fair');
		const f = r.findings.find((x) => x.code === 'levels-off');
		expect(f?.severity).toBe('warning');
		expect(f?.text).toContain('679 mV at 100 IRE where 700 mV is expected');
		expect(f?.text).toContain('3 IRE under');
	});
	it('adds no such finding when another one already explains the grade', () => {
		const r = analyzeLevels(perfectExcept(10, [27, 27, 27]));
		expect(codes(r)).toContain('shadows-dark');
		expect(codes(r)).not.toContain('levels-off');
	});
});
