import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { analyzeLevels, type LevelStepInput } from '../../../src/lib/levels';
import { STEPS } from './helpers';

// Property (house rubric sg-levels-1, RUBRIC.score): the score never rises
// when any single reading moves further from its expected value.
const channel = fc.constantFrom('r', 'g', 'b' as const);
// Mostly small deviations (so scores stay above the 0 clamp and the
// property is not trivially true), sometimes large ones.
const deviation = fc.oneof(
	{ arbitrary: fc.double({ min: -4, max: 4, noNaN: true }), weight: 6 },
	{ arbitrary: fc.constant(0), weight: 2 },
	{ arbitrary: fc.double({ min: -60, max: 60, noNaN: true }), weight: 1 }
);
const readings = fc.array(fc.tuple(deviation, deviation, deviation), { minLength: 11, maxLength: 11 });

function build(devs: Array<[number, number, number]>): LevelStepInput[] {
	return STEPS.map((ire, k) => {
		const e = 7 * ire;
		// readings below -5 mV are rejected as input errors, so clamp at 0 mV
		const v = (d: number) => Math.max(0, e + d);
		return { ire, r: v(devs[k][0]), g: v(devs[k][1]), b: v(devs[k][2]) };
	});
}

describe('score monotonicity (fast-check)', () => {
	it('moving one reading away from its expected value never raises the score', () => {
		fc.assert(
			fc.property(
				readings,
				fc.integer({ min: 0, max: 10 }),
				channel,
				fc.oneof(fc.double({ min: 0, max: 5, noNaN: true }), fc.double({ min: 0, max: 100, noNaN: true })),
				(devs, k, c, extra) => {
					const before = build(devs);
					const after = before.map((s) => ({ ...s }));
					const e = 7 * STEPS[k];
					const cur = after[k][c];
					// push further from expected in the direction it already deviates (up when exact)
					const next = cur >= e ? cur + extra : Math.max(0, cur - extra);
					after[k][c] = Math.min(next, 2000);
					const a = analyzeLevels({ steps: before });
					const b = analyzeLevels({ steps: after });
					expect(b.score!).toBeLessThanOrEqual(a.score!);
				}
			),
			{ numRuns: 400 }
		);
	});

	it('the worst deviation never falls and dE00 at the moved step never falls for a single-channel move from exact', () => {
		fc.assert(
			fc.property(
				fc.integer({ min: 1, max: 10 }),
				channel,
				fc.double({ min: 0.1, max: 100, noNaN: true }),
				(k, c, extra) => {
					const base = build(Array.from({ length: 11 }, () => [0, 0, 0] as [number, number, number]));
					const moved = base.map((s) => ({ ...s }));
					moved[k][c] += extra;
					const a = analyzeLevels({ steps: base });
					const b = analyzeLevels({ steps: moved });
					expect(b.worstDeviationIre).toBeGreaterThanOrEqual(a.worstDeviationIre);
					expect(b.steps[k].deltaE00).toBeGreaterThan(0);
					expect(b.score).toBeLessThan(100);
				}
			),
			{ numRuns: 200 }
		);
	});

	it('the generator yields non-trivial scores (guards the property above against the 0 clamp)', () => {
		const scores = fc.sample(readings, { numRuns: 200, seed: 42 }).map((d) => analyzeLevels({ steps: build(d) }).score);
		expect(scores.filter((s) => s! > 0).length).toBeGreaterThan(40);
	});

	it('the score is always within 0..100 and the band is always one of the five', () => {
		fc.assert(
			fc.property(readings, (devs) => {
				const r = analyzeLevels({ steps: build(devs) });
				expect(r.score).toBeGreaterThanOrEqual(0);
				expect(r.score).toBeLessThanOrEqual(100);
				expect(['exact', 'close', 'fair', 'poor', 'failing']).toContain(r.band);
			}),
			{ numRuns: 200 }
		);
	});
});

// Property (house rubric sg-levels-2, RUBRIC.score.colour): the score counts
// the visible colour error. A run whose channels disagree (a cast) never
// scores above the run that carries, at every step, the mean of its three
// deviations on all three channels: the same error, with no cast. (A run
// with a larger deviation on all channels cannot be the comparison: by the
// property above, moving readings further away never raises the score.)
describe('visible colour error in the score (fast-check)', () => {
	const meanOnAll = (steps: LevelStepInput[]): LevelStepInput[] =>
		steps.map((s) => {
			const m = (s.r + s.g + s.b) / 3;
			return { ire: s.ire, r: m, g: m, b: m };
		});

	it('a cast never scores above the same mean deviation on all three channels', () => {
		fc.assert(
			fc.property(readings, (devs) => {
				const cast = build(devs);
				const a = analyzeLevels({ steps: cast });
				const b = analyzeLevels({ steps: meanOnAll(cast) });
				fc.pre(a.graded && b.graded);
				expect(a.score!).toBeLessThanOrEqual(b.score!);
			}),
			{ numRuns: 400 }
		);
	});

	it('a cast scores strictly lower when it is visible (worked example: blue +10.5 mV at white, 1.5 IRE)', () => {
		const cast = build(STEPS.map((ire) => (ire === 100 ? [0, 0, 10.5] : [0, 0, 0])));
		const neutral = meanOnAll(cast);
		const a = analyzeLevels({ steps: cast });
		const b = analyzeLevels({ steps: neutral });
		expect(a.worstCastDeltaE00).toBeGreaterThan(1);
		expect(b.worstCastDeltaE00).toBeLessThan(1e-6);
		expect(a.score!).toBeLessThan(b.score!);
		// and within one band both ways: the same band, the cast ranks lower
		expect(a.band).toBe('close');
		expect(b.band).toBe('exact');
	});

	it('the colour term uses the reference display: display options change dE00 figures, never the score', () => {
		const steps = build(STEPS.map((ire) => (ire === 50 ? [2, -1, 3] : [0, 0, 0])));
		const a = analyzeLevels({ steps });
		const b = analyzeLevels({ steps }, { lw: 250, lb: 0.5, gamma: 2.2 });
		expect(b.worstDeltaE00).not.toBeCloseTo(a.worstDeltaE00, 3);
		expect(b.score).toBe(a.score);
	});
});
