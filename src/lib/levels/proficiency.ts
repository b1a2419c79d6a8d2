/**
 * Tester consistency: proficiency-testing statistics over bench runs of the same revision
 * by different testers. Pure and browser-safe.
 *
 * - Consensus per step and channel: ISO 13528:2015 Annex C.3, Algorithm A (robust mean
 *   and standard deviation).
 * - z = (x - x*) / sigma_pt, read as in ISO 13528:2015 section 9 (and ISO/IEC 17043):
 *   |z| <= 2 satisfactory, 2 < |z| < 3 questionable, |z| >= 3 action signal.
 * - Per tester: a straight-line fit of their readings against the consensus (gain and
 *   offset with standard errors) and a verdict in plain words.
 */
import { LevelInputError } from './errors';
import { CHANNELS, type Channel } from './validate';

/**
 * Standard deviation for proficiency assessment, in IRE. OUR choice (fitness for purpose),
 * not a figure from ISO 13528: 1 IRE is 7 mV at 700 mV full scale, about the 1 % of a
 * video signal that a waveform monitor is expected to read to (IEEE Std 205-2001, 5.2.2),
 * and the width of the rubric's best band.
 */
export const SIGMA_PT_IRE = 1;

/** ISO 13528:2015 section 9 limits on |z|. */
export const Z_LIMITS = { questionable: 2, action: 3 } as const;

export type ZSignal = 'satisfactory' | 'questionable' | 'action';

/** Interpretation of a z-score per ISO 13528:2015 section 9. */
export function interpretZ(z: number): ZSignal {
	const a = Math.abs(z);
	if (!Number.isFinite(a)) throw new LevelInputError('z-score must be a finite number');
	if (a <= Z_LIMITS.questionable) return 'satisfactory';
	if (a < Z_LIMITS.action) return 'questionable';
	return 'action';
}

export function zScore(x: number, assigned: number, sigmaPt = SIGMA_PT_IRE): number {
	if (!(sigmaPt > 0)) throw new LevelInputError('sigma_pt must be a positive number');
	return (x - assigned) / sigmaPt;
}

// ------------------------------------------------------------------ Algorithm A

export interface AlgorithmAStep {
	/** Robust mean x* and standard deviation s* after this step (step 0 = median, 1.483 MAD). */
	mean: number;
	sd: number;
}

export interface AlgorithmAResult {
	/** Robust mean x*. */
	mean: number;
	/** Robust standard deviation s*. */
	sd: number;
	n: number;
	/** Iterations after the start values (0 when s* started at 0 or n = 1). */
	iterations: number;
	converged: boolean;
	/** Start values and every iteration, for showing the working. */
	trace: AlgorithmAStep[];
}

const MAX_ITERATIONS = 200;

export function median(xs: readonly number[]): number {
	if (xs.length === 0) throw new LevelInputError('median of no values');
	const s = [...xs].sort((a, b) => a - b);
	const m = Math.floor(s.length / 2);
	return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** True when a and b agree to three significant figures (ISO 13528 C.3.1 stopping rule). */
export function sameToThreeFigures(a: number, b: number): boolean {
	if (a === b) return true;
	const scale = Math.max(Math.abs(a), Math.abs(b));
	if (scale < 1e-12) return true;
	// one unit in the third significant figure of the larger value
	const unit = Math.pow(10, Math.floor(Math.log10(scale)) - 2);
	return Math.abs(a - b) < unit / 2;
}

/**
 * ISO 13528:2015 Annex C.3, Algorithm A. Start: x* = median, s* = 1.483 * median absolute
 * deviation. Repeat: delta = 1.5 s*; clip each value to [x* - delta, x* + delta]; x* = mean of
 * the clipped values; s* = 1.134 * their sample standard deviation; until neither x* nor s*
 * changes in the third significant figure.
 *
 * When more than half the values are identical the MAD, and so s*, is 0 and the iteration
 * cannot move: the result is the median with s* = 0 (the standard leaves this case to the
 * provider; we report it as is). One value gives itself with s* = 0.
 */
export function algorithmA(values: readonly number[]): AlgorithmAResult {
	if (values.length === 0) throw new LevelInputError('Algorithm A needs at least one value');
	for (const v of values) if (!Number.isFinite(v)) throw new LevelInputError('Algorithm A needs finite values');
	const p = values.length;
	let x = median(values);
	let s = 1.483 * median(values.map((v) => Math.abs(v - x)));
	const trace: AlgorithmAStep[] = [{ mean: x, sd: s }];
	if (p === 1 || s === 0) return { mean: x, sd: s, n: p, iterations: 0, converged: true, trace };
	for (let i = 1; i <= MAX_ITERATIONS; i++) {
		const delta = 1.5 * s;
		const clipped = values.map((v) => Math.min(Math.max(v, x - delta), x + delta));
		const nx = clipped.reduce((a, b) => a + b, 0) / p;
		const ns = 1.134 * Math.sqrt(clipped.reduce((a, v) => a + (v - nx) ** 2, 0) / (p - 1));
		trace.push({ mean: nx, sd: ns });
		const done = sameToThreeFigures(nx, x) && sameToThreeFigures(ns, s);
		x = nx;
		s = ns;
		if (done) return { mean: x, sd: s, n: p, iterations: i, converged: true, trace };
	}
	return { mean: x, sd: s, n: p, iterations: MAX_ITERATIONS, converged: false, trace };
}

// ------------------------------------------------------------------ consensus per revision

/** One bench run's readings in IRE (mV / (full scale / 100)). */
export interface RunLevels {
	runId: number;
	/** Who measured it (one name per tester; compared trimmed and case-insensitively). */
	tester: string;
	steps: Array<{ ire: number; r: number; g: number; b: number }>;
}

export interface ConsensusCell {
	ire: number;
	channel: Channel;
	/** Robust mean x* (IRE). */
	value: number;
	/** Robust sd s* (IRE). */
	sd: number;
	n: number;
}

export interface RunZ {
	runId: number;
	tester: string;
	cells: Array<{ ire: number; channel: Channel; reading: number; z: number; signal: ZSignal }>;
	/** The largest |z| over the run's cells, with its sign. */
	worstZ: number;
	worstAt: { ire: number; channel: Channel } | null;
	signal: ZSignal;
	/** Plain-words reason, e.g. '100 IRE green reads 4.6 IRE above the consensus (z = 4.6)'. */
	reason: string;
}

export interface RevisionConsensus {
	testers: number;
	cells: ConsensusCell[];
	runs: RunZ[];
}

export const testerKey = (name: string) => name.trim().replace(/\s+/g, ' ').toLowerCase();

const CHANNEL_WORD: Record<Channel, string> = { r: 'red', g: 'green', b: 'blue' };
const round = (x: number, d = 1) => Math.round(x * 10 ** d) / 10 ** d;

/**
 * Consensus per step and channel over the runs of one revision, and each run's z-scores.
 * Null when the runs come from fewer than two testers (nothing to compare with). A cell
 * needs at least two runs with that step.
 */
export function revisionConsensus(runs: readonly RunLevels[], sigmaPt = SIGMA_PT_IRE): RevisionConsensus | null {
	const testers = new Set(runs.map((r) => testerKey(r.tester)));
	if (testers.size < 2) return null;
	const cells: ConsensusCell[] = [];
	const steps = [...new Set(runs.flatMap((r) => r.steps.map((s) => s.ire)))].sort((a, b) => a - b);
	for (const ire of steps) {
		for (const channel of CHANNELS) {
			const vals = runs
				.map((r) => r.steps.find((s) => s.ire === ire)?.[channel])
				.filter((v): v is number => v !== undefined);
			if (vals.length < 2) continue;
			const a = algorithmA(vals);
			cells.push({ ire, channel, value: a.mean, sd: a.sd, n: a.n });
		}
	}
	const zs: RunZ[] = runs.map((run) => {
		const out: RunZ['cells'] = [];
		for (const c of cells) {
			const reading = run.steps.find((s) => s.ire === c.ire)?.[c.channel];
			if (reading === undefined) continue;
			const z = zScore(reading, c.value, sigmaPt);
			out.push({ ire: c.ire, channel: c.channel, reading, z, signal: interpretZ(z) });
		}
		const worst = out.reduce<(typeof out)[number] | null>(
			(w, c) => (!w || Math.abs(c.z) > Math.abs(w.z) ? c : w),
			null
		);
		const signal = worst ? worst.signal : 'satisfactory';
		const reason = worst
			? `${worst.ire} IRE ${CHANNEL_WORD[worst.channel]} reads ${round(Math.abs(worst.z) * sigmaPt)} IRE ${worst.z >= 0 ? 'above' : 'below'} the consensus of ${runs.length} runs by ${testers.size} testers (z = ${round(worst.z)})`
			: 'no step shared with other runs';
		return {
			runId: run.runId,
			tester: run.tester,
			cells: out,
			worstZ: worst?.z ?? 0,
			worstAt: worst ? { ire: worst.ire, channel: worst.channel } : null,
			signal,
			reason
		};
	});
	return { testers: testers.size, cells, runs: zs };
}

// ------------------------------------------------------------------ straight-line fit

export interface LineFit {
	n: number;
	slope: number;
	intercept: number;
	/** Standard errors from the residual variance (n - 2 degrees of freedom). */
	seSlope: number;
	seIntercept: number;
	/** Residual standard deviation. */
	residualSd: number;
}

/** Ordinary least squares y = intercept + slope * x, with the textbook standard errors. */
export function fitLine(xs: readonly number[], ys: readonly number[]): LineFit {
	const n = xs.length;
	if (n !== ys.length) throw new LevelInputError('x and y must have the same length');
	if (n < 3) throw new LevelInputError('a straight-line fit with standard errors needs at least 3 points');
	const mx = xs.reduce((a, b) => a + b, 0) / n;
	const my = ys.reduce((a, b) => a + b, 0) / n;
	let sxx = 0;
	let sxy = 0;
	for (let i = 0; i < n; i++) {
		sxx += (xs[i] - mx) ** 2;
		sxy += (xs[i] - mx) * (ys[i] - my);
	}
	if (sxx === 0) throw new LevelInputError('all x values are the same: no slope to fit');
	const slope = sxy / sxx;
	const intercept = my - slope * mx;
	let sse = 0;
	for (let i = 0; i < n; i++) sse += (ys[i] - intercept - slope * xs[i]) ** 2;
	const s2 = sse / (n - 2);
	return {
		n,
		slope,
		intercept,
		seSlope: Math.sqrt(s2 / sxx),
		seIntercept: Math.sqrt(s2 * (1 / n + (mx * mx) / sxx)),
		residualSd: Math.sqrt(s2)
	};
}

// ------------------------------------------------------------------ per-tester verdict

/**
 * Our thresholds for calling a tester off (house rules, not from ISO 13528): a gain at least
 * 2 % from 1, or an offset at least 1 IRE from 0, and in either case more than two standard
 * errors away, so noise alone rarely trips it. A fit needs revisions measured by at least
 * three testers: with two, nobody can tell which of them is off.
 */
export const TESTER_RULES = {
	gainTolerance: 0.02,
	offsetToleranceIre: 1,
	standardErrors: 2,
	minTestersPerRevision: 3,
	minRevisions: 2
} as const;

export type TesterStatus = 'consistent' | 'reads-high' | 'reads-low' | 'offset-high' | 'offset-low' | 'too-little-data';

export interface TesterPoint {
	revisionId: number;
	converterId: number;
	runId: number;
	/** Consensus x* and the tester's reading, IRE. */
	consensus: number;
	reading: number;
}

export interface TesterAssessment {
	tester: string;
	status: TesterStatus;
	flagged: boolean;
	revisions: number;
	converters: number;
	runs: number;
	fit: LineFit | null;
	/** Gain as a percentage difference from 1 (+4.2 = reads 4.2 % high). */
	gainPercent: number | null;
	verdict: string;
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/**
 * Gain and offset of one tester against the consensus, from the (consensus, reading) pairs
 * of every step and channel of their runs on revisions shared with others.
 */
export function assessTester(tester: string, points: readonly TesterPoint[]): TesterAssessment {
	const revisions = new Set(points.map((p) => p.revisionId)).size;
	const converters = new Set(points.map((p) => p.converterId)).size;
	const runs = new Set(points.map((p) => p.runId)).size;
	const where = plural(converters, 'converter');
	const base = { tester, revisions, converters, runs };
	if (revisions < TESTER_RULES.minRevisions || points.length < 3) {
		return {
			...base,
			status: 'too-little-data',
			flagged: false,
			fit: null,
			gainPercent: null,
			verdict: `Too little shared data to judge: ${plural(revisions, 'revision')} measured alongside two or more other testers (${TESTER_RULES.minRevisions} needed).`
		};
	}
	const fit = fitLine(
		points.map((p) => p.consensus),
		points.map((p) => p.reading)
	);
	const gainOff = fit.slope - 1;
	const gainPercent = round(gainOff * 100, 1) || 0; // no "-0 %"
	const k = TESTER_RULES.standardErrors;
	const gainBad = Math.abs(gainOff) >= TESTER_RULES.gainTolerance && Math.abs(gainOff) > k * fit.seSlope;
	const offsetBad =
		Math.abs(fit.intercept) >= TESTER_RULES.offsetToleranceIre && Math.abs(fit.intercept) > k * fit.seIntercept;
	const pct = Math.round(Math.abs(gainOff) * 100);
	if (gainBad && gainOff > 0)
		return {
			...base,
			status: 'reads-high',
			flagged: true,
			fit,
			gainPercent,
			verdict: `Reads about ${pct} % high across ${where}: check the scope's vertical calibration and the 75 ohm load.`
		};
	if (gainBad)
		return {
			...base,
			status: 'reads-low',
			flagged: true,
			fit,
			gainPercent,
			verdict: `Reads about ${pct} % low across ${where}: check the scope's vertical calibration and that the line has one 75 ohm load, not two.`
		};
	if (offsetBad) {
		const high = fit.intercept > 0;
		return {
			...base,
			status: high ? 'offset-high' : 'offset-low',
			flagged: true,
			fit,
			gainPercent,
			verdict: `Reads about ${round(Math.abs(fit.intercept))} IRE ${high ? 'high' : 'low'} at every step across ${where}: check the probe's offset, its ground lead and the scope's baseline position.`
		};
	}
	return {
		...base,
		status: 'consistent',
		flagged: false,
		fit,
		gainPercent,
		verdict: `Agrees with the other testers across ${where} (gain ${gainPercent >= 0 ? '+' : ''}${gainPercent} %, offset ${round(fit.intercept) || 0} IRE).`
	};
}

export interface TesterInputRevision {
	revisionId: number;
	converterId: number;
	runs: RunLevels[];
}

export interface TesterReport {
	/** Consensus and z per revision measured by two or more testers. */
	revisions: Array<{ revisionId: number; converterId: number; consensus: RevisionConsensus }>;
	testers: TesterAssessment[];
}

/**
 * Everything the tester pages show, from the runs of every revision: consensus and z where
 * two or more testers measured a revision, and a gain/offset verdict per tester from the
 * revisions measured by at least three.
 *
 * Why the fit does not use the plain Algorithm A consensus: with three to five runs a cell,
 * Algorithm A winsorises little (three values converge near their mean), so one tester whose
 * scope reads 5 % high pulls the consensus up by about a third of that and the others seem
 * to read low. The fit therefore models every reading as gain_t * level + offset_t, takes
 * the consensus level of each cell by Algorithm A over the readings corrected by each
 * tester's current gain and offset, refits, and pins the median tester at gain 1, offset 0
 * (the consensus scale), until the gains settle. A tester's figures are then their readings
 * against that consensus.
 */
export function testerReport(input: readonly TesterInputRevision[], sigmaPt = SIGMA_PT_IRE): TesterReport {
	const revisions: TesterReport['revisions'] = [];
	const names = new Map<string, string>();
	const shared: Array<{ rev: TesterInputRevision; consensus: RevisionConsensus }> = [];
	for (const rev of input) {
		for (const r of rev.runs) if (!names.has(testerKey(r.tester))) names.set(testerKey(r.tester), r.tester.trim());
		const consensus = revisionConsensus(rev.runs, sigmaPt);
		if (!consensus) continue;
		revisions.push({ revisionId: rev.revisionId, converterId: rev.converterId, consensus });
		if (consensus.testers >= TESTER_RULES.minTestersPerRevision) shared.push({ rev, consensus });
	}
	// cells of the shared revisions: every reading with its tester
	type Obs = { key: string; runId: number; reading: number };
	const cells: Array<{ revisionId: number; converterId: number; obs: Obs[]; level: number }> = [];
	for (const { rev, consensus } of shared)
		for (const c of consensus.cells) {
			const obs: Obs[] = [];
			for (const run of rev.runs) {
				const v = run.steps.find((s) => s.ire === c.ire)?.[c.channel];
				if (v !== undefined) obs.push({ key: testerKey(run.tester), runId: run.runId, reading: v });
			}
			cells.push({ revisionId: rev.revisionId, converterId: rev.converterId, obs, level: c.value });
		}
	const gain = new Map<string, number>();
	const offset = new Map<string, number>();
	const fitted = [...new Set(cells.flatMap((c) => c.obs.map((o) => o.key)))];
	for (const k of fitted) {
		gain.set(k, 1);
		offset.set(k, 0);
	}
	for (let iter = 0; iter < 100 && cells.length > 0; iter++) {
		for (const c of cells)
			c.level = algorithmA(c.obs.map((o) => (o.reading - offset.get(o.key)!) / gain.get(o.key)!)).mean;
		const next = new Map<string, { g: number; o: number }>();
		for (const k of fitted) {
			const mine = cells.flatMap((c) => c.obs.filter((o) => o.key === k).map((o) => ({ x: c.level, y: o.reading })));
			const xs = mine.map((p) => p.x);
			if (mine.length < 3 || Math.max(...xs) - Math.min(...xs) < 1e-9) continue;
			const f = fitLine(
				xs,
				mine.map((p) => p.y)
			);
			next.set(k, { g: f.slope, o: f.intercept });
		}
		if (next.size === 0) break;
		const mg = median([...next.values()].map((v) => v.g));
		const mo = median([...next.values()].map((v) => v.o));
		let change = 0;
		for (const [k, v] of next) {
			const g = v.g / mg;
			const o = v.o - mo;
			change = Math.max(change, Math.abs(g - gain.get(k)!), Math.abs(o - offset.get(k)!) / 100);
			gain.set(k, g);
			offset.set(k, o);
		}
		if (change < 1e-7) break;
	}
	const points = new Map<string, TesterPoint[]>([...names.keys()].map((k) => [k, []]));
	for (const c of cells)
		for (const o of c.obs)
			points.get(o.key)!.push({
				revisionId: c.revisionId,
				converterId: c.converterId,
				runId: o.runId,
				consensus: c.level,
				reading: o.reading
			});
	const testers = [...points.entries()]
		.map(([k, pts]) => assessTester(names.get(k)!, pts))
		.sort((a, b) => Number(b.flagged) - Number(a.flagged) || a.tester.localeCompare(b.tester));
	return { revisions, testers };
}
