import { describe, expect, it } from 'vitest';
import {
	LevelInputError,
	aggregateRuns,
	analyzeLevels,
	bestFit,
	interpolateCurve,
	transformSignalIre,
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

	it('gain compensates a converter that runs 10 % low', () => {
		const input = ramp((i) => [6.3 * i, 6.3 * i, 6.3 * i]);
		expect(analyzeLevels(input).band).toBe('failing');
		// 100 IRE * 1/0.9 lies beyond the measured curve: linear extrapolation of the top segment.
		const { steps, report } = whatIf(input, { gain: 1 / 0.9 });
		expect(steps[10].g).toBeCloseTo(700, 6);
		expect(report.band).toBe('exact');
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
		expect(interpolateCurve([[0, 0], [10, 70], [20, 140]], -10)).toBe(0);
		expect(interpolateCurve([[0, 5], [10, 70]], 20)).toBeCloseTo(135, 10);
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
	});

	it('leaves a residual for a bent curve (crushed shadows), in mV and IRE', () => {
		const fit = bestFit(perfectExcept(10, [25, 25, 25]));
		expect(fit.channels.g.residualRmsMv).toBeGreaterThan(5);
		expect(fit.channels.g.residualRmsIre).toBeCloseTo(fit.channels.g.residualRmsMv / 7, 10);
		expect(fit.report.score).toBeGreaterThan(analyzeLevels(perfectExcept(10, [25, 25, 25])).score);
	});

	it('copes with a flat channel (no slope to fit)', () => {
		const fit = bestFit(ramp((i) => [7 * i, 7 * i, 300]));
		expect(fit.channels.b.gain).toBe(1);
		expect(Number.isFinite(fit.channels.b.residualRmsMv)).toBe(true);
	});
});

describe('aggregateRuns (median score; band of the median-score run, lower middle for an even count)', () => {
	const exact = analyzeLevels(ramp());
	const close = analyzeLevels(perfectExcept(50, [360, 360, 360]));
	const poor = analyzeLevels(perfectExcept(50, [385, 385, 385]));
	const failing = analyzeLevels(perfectExcept(10, [25, 25, 25]));

	it('odd count: median score and the band of the median run', () => {
		const a = aggregateRuns([poor, exact, close]);
		expect(a.count).toBe(3);
		expect(a.medianScore).toBe(close.score);
		expect(a.band).toBe('close');
		expect(a.medianRunIndex).toBe(2);
		expect(a.minScore).toBe(poor.score);
		expect(a.maxScore).toBe(100);
		expect(a.scoreSpread).toBeCloseTo(100 - poor.score, 6);
		expect(a.bandCounts).toMatchObject({ exact: 1, close: 1, poor: 1, fair: 0, failing: 0 });
	});

	it('even count: the median score is the mean of the middle two; the band is the lower of them', () => {
		const a = aggregateRuns([exact, close, poor, failing]);
		expect(a.medianScore).toBeCloseTo((close.score + poor.score) / 2, 1);
		expect(a.band).toBe('poor');
	});

	it('one run is its own aggregate', () => {
		expect(aggregateRuns([close])).toMatchObject({ count: 1, band: 'close', medianScore: close.score, scoreSpread: 0 });
	});

	it('rejects no runs and mixed rubric versions', () => {
		expect(() => aggregateRuns([])).toThrow(/no bench runs/);
		expect(() => aggregateRuns([exact, { ...close, rubricVersion: 'old' }])).toThrow(/different rubrics/);
	});
});
