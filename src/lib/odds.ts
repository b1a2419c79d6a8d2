/**
 * The chance of getting each revision at a shop, from verified teardown reports.
 *
 * Each report from a shop is one draw: the unit had revision R or it did not. With a
 * uniform Beta(1, 1) prior on the share p of units with revision R, k hits out of n reports
 * give the posterior Beta(1 + k, 1 + n - k) (Beta-binomial conjugacy). We report its mean
 * and an equal-tailed credible interval from the Beta quantile function (jStat.beta.inv).
 */
// jstat 1.9.6 ships no type declarations; its CommonJS export is the jStat object itself.
// @ts-expect-error -- untyped package (no declaration file), typed locally below
import jStatModule from 'jstat';

interface JStatBeta {
	inv(p: number, alpha: number, beta: number): number;
	cdf(x: number, alpha: number, beta: number): number;
	mean(alpha: number, beta: number): number;
}
const jStat = jStatModule as { beta: JStatBeta };

export interface BetaPosterior {
	alpha: number;
	beta: number;
	mean: number;
	lower: number;
	upper: number;
	/** Credible mass of [lower, upper], e.g. 0.9. */
	level: number;
}

/**
 * Posterior of a share after `k` hits in `n` trials, with a Beta(priorA, priorB) prior
 * (uniform by default) and an equal-tailed interval holding `level` of the posterior mass.
 */
export function betaPosterior(k: number, n: number, level = 0.9, priorA = 1, priorB = 1): BetaPosterior {
	if (!Number.isInteger(k) || !Number.isInteger(n) || k < 0 || n < 0 || k > n) {
		throw new RangeError(`need whole numbers 0 <= k <= n, got k=${k}, n=${n}`);
	}
	if (!(level > 0 && level < 1)) throw new RangeError(`level must be between 0 and 1, got ${level}`);
	const alpha = priorA + k;
	const beta = priorB + n - k;
	const tail = (1 - level) / 2;
	return {
		alpha,
		beta,
		mean: alpha / (alpha + beta),
		lower: jStat.beta.inv(tail, alpha, beta),
		upper: jStat.beta.inv(1 - tail, alpha, beta),
		level
	};
}

export interface TeardownTally {
	shopSlug: string;
	shopName: string;
	revisionCode: string;
}

export interface ShopRevisionOdds {
	shopSlug: string;
	shopName: string;
	reports: number;
	revisions: Array<{ code: string; hits: number; posterior: BetaPosterior }>;
}

/** Reports a shop needs before we estimate its odds. */
export const MIN_REPORTS_PER_SHOP = 3;

/**
 * Per shop with at least `minReports` verified reports, the posterior share of each known
 * revision (revisions never seen at that shop are included with 0 hits).
 */
export function revisionOdds(
	reports: TeardownTally[],
	revisionCodes: string[],
	minReports = MIN_REPORTS_PER_SHOP,
	level = 0.9
): ShopRevisionOdds[] {
	const byShop = new Map<string, { name: string; codes: string[] }>();
	for (const r of reports) {
		const s = byShop.get(r.shopSlug) ?? { name: r.shopName, codes: [] };
		s.codes.push(r.revisionCode);
		byShop.set(r.shopSlug, s);
	}
	const out: ShopRevisionOdds[] = [];
	for (const [shopSlug, s] of byShop) {
		const n = s.codes.length;
		if (n < minReports) continue;
		out.push({
			shopSlug,
			shopName: s.name,
			reports: n,
			revisions: revisionCodes.map((code) => {
				const hits = s.codes.filter((c) => c === code).length;
				return { code, hits, posterior: betaPosterior(hits, n, level) };
			})
		});
	}
	return out.sort((a, b) => a.shopName.localeCompare(b.shopName, 'en'));
}
