import { describe, expect, it } from 'vitest';
import * as ss from 'simple-statistics';
import {
	SIGMA_PT_IRE,
	LevelInputError,
	algorithmA,
	assessTester,
	fitLine,
	interpretZ,
	revisionConsensus,
	sameToThreeFigures,
	testerReport,
	zScore,
	type RunLevels,
	type TesterInputRevision
} from '../../../src/lib/levels';
import { seededRandom } from '../../../src/lib/demo/scenario';

// Source for Algorithm A: ISO 13528:2015, "Statistical methods for use in proficiency
// testing by interlaboratory comparison", Annex C.3 [memory for the clause number]:
// x* = median, s* = 1.483 MAD; repeat delta = 1.5 s*, clip to x* +/- delta, x* = mean,
// s* = 1.134 sd; stop when neither changes in the third significant figure.

describe('Algorithm A (ISO 13528:2015 Annex C.3)', () => {
	it('reproduces a small data set worked by hand, step by step', () => {
		// Five readings of one step (IRE), one of them high.
		const x = [49.8, 50.0, 50.1, 50.3, 53.0];
		// Start: sorted 49.8 50.0 50.1 50.3 53.0 -> median x*0 = 50.1.
		// |x - 50.1| = 0.3 0.1 0 0.2 2.9 -> sorted 0 0.1 0.2 0.3 2.9 -> MAD = 0.2.
		// s*0 = 1.483 * 0.2 = 0.2966.
		// Iteration 1: delta = 1.5 * 0.2966 = 0.4449; limits 49.6551 .. 50.5449;
		//   clipped: 49.8 50.0 50.1 50.3 50.5449; sum 250.7449 -> x*1 = 50.14898.
		//   deviations -0.34898 -0.14898 -0.04898 0.15102 0.39592; squares 0.121787
		//   0.022195 0.002399 0.022807 0.156753, sum 0.325941; / 4 = 0.081485;
		//   sqrt = 0.285456; s*1 = 1.134 * 0.285456 = 0.323707.
		// Iteration 2: delta = 1.5 * 0.323707 = 0.485561; upper limit 50.634541;
		//   clipped: 49.8 50.0 50.1 50.3 50.634541; x*2 = 250.834541 / 5 = 50.166908;
		//   s*2 = 0.360101 (same working as above).
		const a = algorithmA(x);
		expect(a.trace[0].mean).toBe(50.1);
		expect(a.trace[0].sd).toBeCloseTo(0.2966, 6);
		expect(a.trace[1].mean).toBeCloseTo(50.14898, 5);
		expect(a.trace[1].sd).toBeCloseTo(0.323707, 5);
		expect(a.trace[2].mean).toBeCloseTo(50.166908, 5);
		expect(a.trace[2].sd).toBeCloseTo(0.360101, 5);
		// The high reading keeps being clipped, so x* creeps up slowly; continuing the same
		// working (calculator) it stops after 49 iterations at x* = 50.30 (50.295..),
		// s* = 0.655 (both unchanged in the third significant figure).
		expect(a.converged).toBe(true);
		expect(a.iterations).toBe(49);
		expect(a.mean).toBeCloseTo(50.295, 3);
		expect(a.sd).toBeCloseTo(0.655, 3);
		// and far from the plain mean, which the high reading drags to 50.64
		expect(ss.mean(x)).toBeCloseTo(50.64, 6);
	});

	it('converges: the result is (to three figures) its own winsorised mean and scaled sd', () => {
		const rand = seededRandom(1309);
		for (let trial = 0; trial < 50; trial++) {
			const n = 3 + Math.floor(rand() * 10);
			const xs = Array.from({ length: n }, () => 50 + (rand() - 0.5) * 4 + (rand() < 0.15 ? 10 : 0));
			const a = algorithmA(xs);
			expect(a.converged).toBe(true);
			expect(a.trace.length).toBe(a.iterations + 1);
			if (a.sd === 0) continue;
			const d = 1.5 * a.sd;
			const clipped = xs.map((v) => Math.min(Math.max(v, a.mean - d), a.mean + d));
			// one more step changes nothing in the third significant figure
			expect(sameToThreeFigures(ss.mean(clipped), a.mean)).toBe(true);
			expect(Math.abs(1.134 * ss.sampleStandardDeviation(clipped) - a.sd)).toBeLessThan(0.01 * a.sd + 1e-9);
		}
	});

	it('with 2 runs gives their mean and 1.134 times their sd (nothing is clipped)', () => {
		// Worked by hand: median 10.5, MAD 0.5, s*0 = 0.7415, delta 1.112 > 0.5 so both
		// stay; x* = 10.5, s* = 1.134 * sd(10, 11) = 1.134 * 0.70711 = 0.80186.
		const a = algorithmA([10, 11]);
		expect(a.mean).toBe(10.5);
		expect(a.sd).toBeCloseTo(0.80186, 5);
		expect(a.iterations).toBeLessThanOrEqual(2);
	});

	it('with 3 runs, one of them far off, it winsorises but cannot ignore it', () => {
		// Worked by hand for the start: median 100.3, MAD = median(0.3, 0, 4.7) = 0.3,
		// s*0 = 0.4449; iteration 1 clips 105 to 100.3 + 0.66735 = 100.96735 and 100 stays,
		// x*1 = (100 + 100.3 + 100.96735) / 3 = 100.42245.
		const a = algorithmA([100, 100.3, 105]);
		expect(a.trace[0].mean).toBe(100.3);
		expect(a.trace[0].sd).toBeCloseTo(0.4449, 6);
		expect(a.trace[1].mean).toBeCloseTo(100.42245, 5);
		// The iteration settles well below the plain mean (101.77 is its limit; a calculator
		// run of the same steps) but above the median: three values are too few to set one aside.
		expect(a.mean).toBeGreaterThan(100.3);
		expect(a.mean).toBeLessThan(ss.mean([100, 100.3, 105]) + 1e-9);
		expect(a.mean).toBeCloseTo(101.77, 1);
	});

	it('identical readings give that reading and s* = 0 without iterating', () => {
		expect(algorithmA([42, 42, 42])).toMatchObject({ mean: 42, sd: 0, iterations: 0, converged: true });
		// more than half identical: MAD = 0 -> median, s* = 0
		expect(algorithmA([42, 42, 42, 49])).toMatchObject({ mean: 42, sd: 0, iterations: 0 });
	});

	it('one outlier among ten barely moves x*, unlike the mean', () => {
		const xs = [50.0, 50.2, 49.9, 50.1, 49.8, 50.3, 50.0, 49.9, 50.1, 80.0];
		const a = algorithmA(xs);
		expect(ss.mean(xs)).toBeCloseTo(53.03, 2);
		expect(Math.abs(a.mean - 50.03)).toBeLessThan(0.1);
		expect(a.sd).toBeLessThan(0.5);
		expect(interpretZ(zScore(80, a.mean))).toBe('action');
	});

	it('refuses no values and non-numbers', () => {
		expect(() => algorithmA([])).toThrow(LevelInputError);
		expect(() => algorithmA([1, Number.NaN])).toThrow(LevelInputError);
	});
});

describe('z-scores (ISO 13528:2015 section 9)', () => {
	it('uses our sigma_pt of 1 IRE and the section 9 limits', () => {
		expect(SIGMA_PT_IRE).toBe(1);
		expect(zScore(52.5, 50)).toBe(2.5);
		expect(interpretZ(2)).toBe('satisfactory');
		expect(interpretZ(-2)).toBe('satisfactory');
		expect(interpretZ(2.01)).toBe('questionable');
		expect(interpretZ(-2.99)).toBe('questionable');
		expect(interpretZ(3)).toBe('action');
		expect(interpretZ(-7)).toBe('action');
		expect(() => zScore(1, 0, 0)).toThrow(LevelInputError);
	});
});

const ramp = (gain: number, noise: () => number, offset = 0) =>
	[0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100].map((ire) => ({
		ire,
		r: gain * ire + offset + noise(),
		g: gain * ire + offset + noise(),
		b: gain * ire + offset + noise()
	}));

describe('revisionConsensus', () => {
	it('needs two testers; flags the run that reads far off at the top step', () => {
		const one: RunLevels[] = [
			{ runId: 1, tester: 'Ann', steps: ramp(1, () => 0) },
			{ runId: 2, tester: ' ann ', steps: ramp(1.1, () => 0) }
		];
		expect(revisionConsensus(one)).toBeNull();
		const rand = seededRandom(7);
		const noise = () => (rand() - 0.5) * 0.4;
		const c = revisionConsensus([
			{ runId: 1, tester: 'Ann', steps: ramp(1, noise) },
			{ runId: 2, tester: 'Bo', steps: ramp(1, noise) },
			{ runId: 3, tester: 'Cy', steps: ramp(1, noise) },
			{ runId: 4, tester: 'Di', steps: ramp(1.06, noise) }
		])!;
		expect(c.testers).toBe(4);
		expect(c.cells).toHaveLength(33);
		const di = c.runs.find((r) => r.runId === 4)!;
		expect(di.signal).toBe('action');
		expect(di.worstAt?.ire).toBe(100);
		expect(di.reason).toMatch(
			/^100 IRE (red|green|blue) reads [\d.]+ IRE above the consensus of 4 runs by 4 testers \(z = [\d.]+\)$/
		);
		for (const r of c.runs.filter((r) => r.runId !== 4)) expect(r.signal).not.toBe('action');
	});
});

describe('fitLine against simple-statistics 7 (general-purpose reference)', () => {
	it('gives the same slope and intercept, and standard errors built from its parts', () => {
		const rand = seededRandom(99);
		const xs = Array.from({ length: 40 }, (_, i) => i * 2.5);
		const ys = xs.map((x) => 1.04 * x + 0.7 + (rand() - 0.5) * 2);
		const f = fitLine(xs, ys);
		const ref = ss.linearRegression(xs.map((x, i) => [x, ys[i]]));
		expect(f.slope).toBeCloseTo(ref.m, 10);
		expect(f.intercept).toBeCloseTo(ref.b, 10);
		// Textbook standard errors (e.g. Draper & Smith, Applied Regression Analysis, ch. 1):
		// s^2 = SSE / (n - 2), se(b1) = s / sqrt(Sxx), se(b0) = s sqrt(1/n + xbar^2 / Sxx).
		const line = ss.linearRegressionLine(ref);
		const sse = ss.sum(xs.map((x, i) => (ys[i] - line(x)) ** 2));
		const sxx = ss.sumNthPowerDeviations(xs, 2);
		const s = Math.sqrt(sse / (xs.length - 2));
		expect(f.seSlope).toBeCloseTo(s / Math.sqrt(sxx), 10);
		expect(f.seIntercept).toBeCloseTo(s * Math.sqrt(1 / xs.length + ss.mean(xs) ** 2 / sxx), 10);
		// and r^2 agrees with the library's own rSquared
		const r2 = 1 - sse / ss.sumNthPowerDeviations(ys, 2);
		expect(r2).toBeCloseTo(
			ss.rSquared(
				xs.map((x, i) => [x, ys[i]]),
				line
			),
			10
		);
	});

	it('is exact with zero standard errors on a perfect line, and refuses degenerate input', () => {
		const f = fitLine([0, 50, 100], [1, 53.5, 106]);
		expect(f.slope).toBeCloseTo(1.05, 12);
		expect(f.intercept).toBeCloseTo(1, 12);
		expect(f.seSlope).toBeCloseTo(0, 12);
		expect(() => fitLine([1, 2], [1, 2])).toThrow(LevelInputError);
		expect(() => fitLine([5, 5, 5], [1, 2, 3])).toThrow(LevelInputError);
	});
});

describe('tester verdicts', () => {
	// Three testers on six converters; the third one's scope reads 5 % high.
	function world(seed: number, gains: Record<string, number>, offsets: Record<string, number> = {}) {
		const rand = seededRandom(seed);
		const noise = () => (rand() - 0.5) * 0.6;
		const revs: TesterInputRevision[] = [];
		let runId = 1;
		for (let rev = 1; rev <= 6; rev++) {
			const chipGain = 0.96 + rev * 0.01;
			revs.push({
				revisionId: rev,
				converterId: 100 + rev,
				runs: Object.entries(gains).map(([tester, g]) => ({
					runId: runId++,
					tester,
					steps: ramp(g * chipGain, noise, offsets[tester] ?? 0)
				}))
			});
		}
		return revs;
	}

	it('flags exactly the tester whose scope reads 5 % high, in plain words', () => {
		const report = testerReport(world(3, { Ada: 1, Bram: 1, Cleo: 1.05 }));
		const flagged = report.testers.filter((t) => t.flagged);
		expect(flagged.map((t) => t.tester)).toEqual(['Cleo']);
		expect(flagged[0].status).toBe('reads-high');
		expect(flagged[0].gainPercent!).toBeGreaterThan(4);
		expect(flagged[0].gainPercent!).toBeLessThan(6);
		expect(flagged[0].verdict).toBe(
			"Reads about 5 % high across 6 converters: check the scope's vertical calibration and the 75 ohm load."
		);
		for (const t of report.testers.filter((t) => !t.flagged)) {
			expect(t.status).toBe('consistent');
			expect(Math.abs(t.gainPercent!)).toBeLessThan(1);
		}
		expect(report.revisions).toHaveLength(6);
	});

	it('calls a low gain and a constant offset by their names', () => {
		const low = testerReport(world(4, { Ada: 1, Bram: 1, Cleo: 1, Dev: 0.96 }));
		expect(low.testers.filter((t) => t.flagged).map((t) => [t.tester, t.status])).toEqual([['Dev', 'reads-low']]);
		const off = testerReport(world(5, { Ada: 1, Bram: 1, Cleo: 1 }, { Bram: 2 }));
		const bram = off.testers.find((t) => t.tester === 'Bram')!;
		expect(bram.status).toBe('offset-high');
		expect(bram.verdict).toMatch(/^Reads about 2 IRE high at every step across 6 converters/);
		expect(off.testers.filter((t) => t.flagged)).toHaveLength(1);
	});

	it('does not judge a tester who shares fewer than two revisions with two others', () => {
		const a = assessTester('Solo', [{ revisionId: 1, converterId: 1, runId: 1, consensus: 50, reading: 55 }]);
		expect(a.status).toBe('too-little-data');
		expect(a.flagged).toBe(false);
		// two testers only: z-scores exist, but no verdict
		const two = testerReport(world(6, { Ada: 1, Cleo: 1.05 }));
		expect(two.revisions).toHaveLength(6);
		expect(two.testers.every((t) => t.status === 'too-little-data')).toBe(true);
	});
});
