import { describe, expect, it } from 'vitest';
import {
	LevelInputError,
	aggregateRuns,
	analyzeLevels,
	bestFit,
	interpolateCurve,
	medianBand,
	transformSignalIre,
	unclippedSignalIre,
	whatIf
} from '../../../src/lib/levels';
import { perfectExcept, ramp } from './helpers';

describe('whatIf (interpolating the measured transfer curve)', () => {
	it('no transform reproduces the measured readings', () => {
		const input = ramp((i) => [6.5 * i + 3, 7 * i, 7.2 * i]);
		const { steps, report } = whatIf(input, {});
		steps.forEach((s, k) => {
			expect(s.r).toBeCloseTo(input.steps[k].r, 10);
			expect(s.b).toBeCloseTo(input.steps[k].b, 10);
		});
		expect(report.score).toBe(analyzeLevels(input).score);
	});

	it('gain cannot drive the source past its own white: a converter 10 % low stays short at 100 IRE, and the panel says the setting clips', () => {
		const input = ramp((i) => [6.3 * i, 6.3 * i, 6.3 * i]);
		expect(analyzeLevels(input).band).toBe('failing');
		// 90 IRE x 1/0.9 = 100 IRE: exactly the source's white, read off the measured curve (630 mV)
		const { steps, report, clipping } = whatIf(input, { gain: 1 / 0.9 });
		expect(steps[9].g).toBeCloseTo(630, 6);
		// 100 IRE x 1/0.9 = 111 IRE is past the source's white: it sends white, and the converter gives 630 mV
		expect(steps[10].g).toBeCloseTo(630, 6);
		expect(report.band).toBe('failing');
		expect(clipping.white).toEqual([100]);
		expect(clipping.black).toEqual([]);
		expect(clipping.words).toBe(
			"This setting clips: 100 IRE goes past the source's white and shows as white (highlight detail lost)."
		);
		// a smaller gain that stays inside the range does not clip
		expect(whatIf(input, { gain: 0.98, blackLiftIre: 1 }).clipping).toEqual({ black: [], white: [], words: null });
	});

	it('the source clips at its own black before the curve: a negative lift crushes the bottom steps to black', () => {
		const { steps, clipping } = whatIf(ramp(), { blackLiftIre: -15 });
		expect(steps[0].g).toBe(0);
		expect(steps[1].g).toBe(0); // 10 - 15 = -5 IRE: the source sends black
		expect(steps[2].g).toBeCloseTo(35, 10); // 20 - 15 = 5 IRE
		expect(clipping.black).toEqual([0, 10]);
		expect(clipping.words).toBe(
			"This setting clips: 0 and 10 IRE fall below the source's black and show as black (shadow detail lost)."
		);
		expect(transformSignalIre(10, { blackLiftIre: -15 })).toBe(0);
		expect(unclippedSignalIre(10, { blackLiftIre: -15 })).toBeCloseTo(-5, 10);
		// limited-to-full pushes 0 IRE below black and 100 IRE past white (codes 16..235 expanded to 0..255)
		const lf = whatIf(ramp(), { range: 'limited-to-full' }).clipping;
		expect(lf.black).toEqual([0]);
		expect(lf.white).toEqual([100]);
	});

	it('black lift rescues crushed shadows only partly and interpolates piecewise-linearly', () => {
		const input = ramp((i) => (i === 10 ? [28, 28, 28] : [7 * i, 7 * i, 7 * i]));
		const { steps } = whatIf(input, { blackLiftIre: 5 });
		// 10 IRE -> 15 IRE, halfway between 28 mV (10) and 140 mV (20)
		expect(steps[1].r).toBeCloseTo(84, 10);
		// 0 IRE -> 5 IRE, halfway between 0 and 28 mV
		expect(steps[0].r).toBeCloseTo(14, 10);
	});

	it('limited-to-full and full-to-limited use the 16..235 code range (ITU-R BT.601/BT.709 8-bit quantisation)', () => {
		expect(transformSignalIre(0, { range: 'full-to-limited' })).toBeCloseTo((16 / 255) * 100, 10);
		expect(transformSignalIre(100, { range: 'full-to-limited' })).toBeCloseTo((235 / 255) * 100, 10);
		expect(transformSignalIre((16 / 255) * 100, { range: 'limited-to-full' })).toBeCloseTo(0, 10);
		expect(transformSignalIre((235 / 255) * 100, { range: 'limited-to-full' })).toBeCloseTo(100, 10);
		const { report } = whatIf(ramp(), { range: 'full-to-limited' });
		expect(report.steps[0].r).toBeCloseTo(7 * (1600 / 255), 6); // black lifted to about 43.9 mV
		expect(report.findings.map((f) => f.code)).toContain('black-lifted');
	});

	it('clamps at 0 mV when the signal is pushed below black', () => {
		expect(
			interpolateCurve(
				[
					[0, 0],
					[10, 70],
					[20, 140]
				],
				-10
			)
		).toBe(0);
		expect(
			interpolateCurve(
				[
					[0, 5],
					[10, 70]
				],
				20
			)
		).toBeCloseTo(135, 10);
		const { steps } = whatIf(ramp(), { blackLiftIre: -20 });
		expect(steps[1].g).toBe(0);
		expect(steps[3].g).toBeCloseTo(70, 10);
	});

	it('rejects a nonsense transform', () => {
		expect(() => whatIf(ramp(), { gain: 0 })).toThrow(LevelInputError);
		expect(() => whatIf(ramp(), { blackLiftIre: NaN })).toThrow(/blackLiftIre/);
		expect(() => whatIf(ramp(), { range: 'sideways' as never })).toThrow(/range/);
	});
});

describe('bestFit (per-channel least squares)', () => {
	it('finds the exact gain and offset of a linear error, with zero residual', () => {
		const input = ramp((i) => [7 * i * 0.9 + 10, 7 * i, 7 * i * 1.1]);
		const fit = bestFit(input);
		expect(fit.channels.r.gain).toBeCloseTo(1 / 0.9, 8);
		expect(fit.channels.r.offsetMv).toBeCloseTo(-10 / 0.9, 6);
		expect(fit.channels.g.gain).toBeCloseTo(1, 10);
		expect(fit.channels.b.gain).toBeCloseTo(1 / 1.1, 8);
		for (const c of ['r', 'g', 'b'] as const) expect(fit.channels[c].residualRmsMv).toBeLessThan(1e-6);
		expect(fit.report.band).toBe('exact');
		expect(fit.rescuable).toBe(true);
		expect(fit.verdict).toMatch(/^A source setting can rescue it/);
	});

	it('says when the residual means no source setting can rescue it (crushed shadows bend the curve)', () => {
		const fit = bestFit(perfectExcept(10, [25, 25, 25]));
		expect(fit.rescuable).toBe(false);
		expect(fit.report.band).not.toBe('exact');
		expect(fit.verdict).toMatch(
			/^No source setting can rescue it: even the best gain and offset per channel leave \d+\.\d IRE RMS on red/
		);
	});

	it('leaves a residual for a bent curve (crushed shadows), in mV and IRE', () => {
		const fit = bestFit(perfectExcept(10, [25, 25, 25]));
		expect(fit.channels.g.residualRmsMv).toBeGreaterThan(5);
		expect(fit.channels.g.residualRmsIre).toBeCloseTo(fit.channels.g.residualRmsMv / 7, 10);
		expect(fit.report.score!).toBeGreaterThan(analyzeLevels(perfectExcept(10, [25, 25, 25])).score!);
	});

	it('copes with a flat channel (no slope to fit)', () => {
		const fit = bestFit(ramp((i) => [7 * i, 7 * i, 300]));
		expect(fit.channels.b.gain).toBe(1);
		expect(Number.isFinite(fit.channels.b.residualRmsMv)).toBe(true);
	});
});

describe("aggregateRuns (house rubric sg-levels-2: the median of the graded runs' bands; worse middle band for an even count)", () => {
	const exact = analyzeLevels(ramp());
	const close = analyzeLevels(perfectExcept(50, [360, 360, 360]));
	const fair = analyzeLevels(perfectExcept(50, [370, 370, 370]));
	const poor = analyzeLevels(perfectExcept(50, [385, 385, 385]));
	const failing = analyzeLevels(perfectExcept(10, [25, 25, 25]));
	const unterminated = analyzeLevels(ramp((i) => [14 * i, 14 * i, 14 * i]));

	it('the fixtures land in the bands they are named for', () => {
		expect([exact, close, fair, poor, failing].map((r) => r.band)).toEqual([
			'exact',
			'close',
			'fair',
			'poor',
			'failing'
		]);
	});

	it('Close, Poor and Failing give Poor (the middle band), whatever the scores', () => {
		const a = aggregateRuns([close, poor, failing]);
		expect(a.band).toBe('poor');
		expect(a.medianScore).toBe(poor.score);
		expect(a.medianRunIndex).toBe(1);
		expect(a.bandCounts).toMatchObject({ exact: 0, close: 1, fair: 0, poor: 1, failing: 1 });
	});

	it('a high-scoring run in a worse band never lifts the revision (scores do not follow band order)', () => {
		// A Fair run can outscore a Close one: the band looks at the worst step, the score at all of them.
		const fairHigh = analyzeLevels(perfectExcept(50, [350, 350, 367]));
		const closeLow = analyzeLevels(ramp((i) => (i === 0 ? [0, 0, 0] : [7 * i + 13.3, 7 * i + 13.3, 7 * i + 13.3])));
		expect(fairHigh.band).toBe('fair');
		expect(closeLow.band).toBe('close');
		expect(fairHigh.score!).toBeGreaterThan(closeLow.score!);
		// two runs: the worse of the two middle bands, never better than either deserves
		expect(aggregateRuns([fairHigh, closeLow]).band).toBe('fair');
		expect(aggregateRuns([closeLow, fairHigh]).band).toBe('fair');
	});

	it('even count: the worse of the two middle bands; the score is the median of the runs in that band', () => {
		const a = aggregateRuns([exact, close, poor, failing]);
		expect(a.band).toBe('poor');
		expect(a.medianScore).toBe(poor.score);
		const b = aggregateRuns([exact, exact, close, close]);
		expect(b.band).toBe('close');
		expect(b.medianScore).toBe(close.score);
		expect(b.minScore).toBe(close.score);
		expect(b.maxScore).toBe(100);
		expect(b.scoreSpread).toBeCloseTo(100 - close.score!, 6);
	});

	it('odd count: the middle band; lowest and highest score over all graded runs', () => {
		const a = aggregateRuns([poor, exact, close]);
		expect(a.count).toBe(3);
		expect(a.band).toBe('close');
		expect(a.medianScore).toBe(close.score);
		expect(a.medianRunIndex).toBe(2);
		expect(a.minScore).toBe(poor.score);
		expect(a.maxScore).toBe(100);
	});

	it('runs that are not graded (unterminated) are left out and counted apart', () => {
		const a = aggregateRuns([close, unterminated, failing, unterminated, fair]);
		expect(a).toMatchObject({ count: 3, notGradedCount: 2, band: 'fair' });
		const none = aggregateRuns([unterminated]);
		expect(none).toMatchObject({ count: 0, notGradedCount: 1, band: null, medianScore: null, medianRunIndex: null });
	});

	it('medianBand: the worse middle band for an even count', () => {
		expect(medianBand(['exact', 'failing'])).toBe('failing');
		expect(medianBand(['close', 'poor', 'failing'])).toBe('poor');
		expect(medianBand(['close', 'exact', 'fair', 'exact'])).toBe('close');
		expect(medianBand([])).toBeNull();
	});

	it('one run is its own aggregate', () => {
		expect(aggregateRuns([close])).toMatchObject({ count: 1, band: 'close', medianScore: close.score, scoreSpread: 0 });
	});

	it('rejects no runs and mixed rubric versions', () => {
		expect(() => aggregateRuns([])).toThrow(/no bench runs/);
		expect(() => aggregateRuns([exact, { ...close, rubricVersion: 'old' }])).toThrow(/different rubrics/);
	});
});
