import { describe, expect, it } from 'vitest';
import { betaPosterior, revisionOdds } from '../../src/lib/odds';

describe('betaPosterior', () => {
	it('matches the placenta previa worked example (binomial data, uniform prior)', () => {
		// Source: A. Gelman et al., Bayesian Data Analysis, 3rd ed., section 2.4, "Example:
		// estimating the probability of a female birth given placenta previa": 437 girls of 980
		// births, uniform prior -> Beta(438, 544), posterior mean 0.446, central 95 % interval
		// [0.415, 0.477]. [memory for the section number; figures as printed, to 3 decimals]
		const p = betaPosterior(437, 980, 0.95);
		expect(p.alpha).toBe(438);
		expect(p.beta).toBe(544);
		expect(p.mean).toBeCloseTo(0.446, 3);
		expect(p.lower).toBeCloseTo(0.415, 3);
		expect(p.upper).toBeCloseTo(0.477, 3);
	});

	it('agrees with the closed-form quantiles of Beta(a, 1) and Beta(1, b)', () => {
		// Closed forms (common practice): Beta(a, 1) has CDF x^a, so its p-quantile is p^(1/a);
		// Beta(1, b) has CDF 1 - (1 - x)^b, so its p-quantile is 1 - (1 - p)^(1/b).
		const all = betaPosterior(4, 4, 0.9); // Beta(5, 1)
		expect(all.lower).toBeCloseTo(0.05 ** (1 / 5), 9);
		expect(all.upper).toBeCloseTo(0.95 ** (1 / 5), 9);
		const none = betaPosterior(0, 3, 0.9); // Beta(1, 4)
		expect(none.lower).toBeCloseTo(1 - 0.95 ** (1 / 4), 9);
		expect(none.upper).toBeCloseTo(1 - 0.05 ** (1 / 4), 9);
		expect(none.mean).toBeCloseTo(1 / 5, 12);
	});

	it('has a symmetric interval for a symmetric posterior and narrows with more reports', () => {
		const a = betaPosterior(2, 4);
		expect(a.mean).toBeCloseTo(0.5, 12);
		expect(a.lower + a.upper).toBeCloseTo(1, 9);
		const b = betaPosterior(20, 40);
		expect(b.upper - b.lower).toBeLessThan(a.upper - a.lower);
	});

	it('rejects impossible counts', () => {
		expect(() => betaPosterior(5, 4)).toThrow(RangeError);
		expect(() => betaPosterior(-1, 4)).toThrow(RangeError);
		expect(() => betaPosterior(1, 4, 1)).toThrow(RangeError);
	});
});

describe('revisionOdds', () => {
	const rep = (shop: string, code: string) => ({ shopSlug: shop, shopName: shop.toUpperCase(), revisionCode: code });

	it('estimates only for shops with enough reports, one line per known revision', () => {
		const odds = revisionOdds(
			[rep('s1', 'A'), rep('s1', 'B'), rep('s1', 'B'), rep('s2', 'A'), rep('s2', 'A')],
			['A', 'B']
		);
		expect(odds).toHaveLength(1);
		expect(odds[0].shopSlug).toBe('s1');
		expect(odds[0].reports).toBe(3);
		const [a, b] = odds[0].revisions;
		expect(a).toMatchObject({ code: 'A', hits: 1 });
		expect(b).toMatchObject({ code: 'B', hits: 2 });
		// Beta(2, 3) and Beta(3, 2): means 2/5 and 3/5, mirror-image intervals.
		expect(a.posterior.mean).toBeCloseTo(0.4, 12);
		expect(b.posterior.mean).toBeCloseTo(0.6, 12);
		expect(a.posterior.lower).toBeCloseTo(1 - b.posterior.upper, 9);
	});
});
