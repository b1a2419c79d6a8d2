/**
 * What-if predictions: would a level setting on the source rescue this
 * converter? Both functions work from the measured transfer curve only.
 */
import { analyzeLevels, type AnalyzeOptions, type LevelReport } from './analyze';
import { LevelInputError } from './errors';
import { RUBRIC, bandRank } from './rubric';
import { CHANNELS, validateLevelInput, type Channel, type LevelInput, type LevelStepInput } from './validate';

export interface LevelTransform {
	/** Added to the signal, in IRE (a brightness-style offset). */
	blackLiftIre?: number;
	/** Multiplies the signal (a contrast-style gain about black). */
	gain?: number;
	/**
	 * Quantisation-range remap applied first. In 8-bit codes, limited range
	 * puts black at 16 and white at 235 (ITU-R BT.601/BT.709 quantisation),
	 * full range uses 0..255. 'limited-to-full' expands (x - 16/255) * 255/219;
	 * 'full-to-limited' compresses x * 219/255 + 16/255 (x as a fraction).
	 */
	range?: 'none' | 'limited-to-full' | 'full-to-limited';
}

const LIMITED_BLACK = 16 / 255;
const LIMITED_SPAN = 219 / 255;

/** Slack for deciding a step was pushed past an end of the source's range (IRE). */
const CLIP_EPS_IRE = 1e-9;

/**
 * The source-side signal (IRE) a pattern step becomes under the transform,
 * before clipping: may fall outside 0..100.
 */
export function unclippedSignalIre(ire: number, t: LevelTransform): number {
	let x = ire / 100;
	if (t.range === 'limited-to-full') x = (x - LIMITED_BLACK) / LIMITED_SPAN;
	else if (t.range === 'full-to-limited') x = x * LIMITED_SPAN + LIMITED_BLACK;
	x = x * (t.gain ?? 1) + (t.blackLiftIre ?? 0) / 100;
	return x * 100;
}

/**
 * The signal (IRE) the source really sends for a pattern step: the transform,
 * clipped at the source's own black (0) and white (100), since no source can
 * drive past the ends of its code range.
 */
export function transformSignalIre(ire: number, t: LevelTransform): number {
	return Math.min(100, Math.max(0, unclippedSignalIre(ire, t)));
}

/**
 * Piecewise-linear interpolation over measured (ire, mV) points. Beyond them
 * (whatIf never goes there: the source clips at 0 and 100 IRE first) it
 * extrapolates the end segments, never below 0 mV.
 */
export function interpolateCurve(points: Array<[number, number]>, x: number): number {
	const n = points.length;
	let i = 0;
	if (x <= points[0][0]) i = 0;
	else if (x >= points[n - 1][0]) i = n - 2;
	else while (i < n - 2 && x > points[i + 1][0]) i++;
	const [x0, y0] = points[i];
	const [x1, y1] = points[i + 1];
	const y = y0 + ((y1 - y0) * (x - x0)) / (x1 - x0);
	return x < points[0][0] || x > points[n - 1][0] ? Math.max(0, y) : y;
}

/** Pattern steps a transform pushes past the source's black or white. */
export interface WhatIfClipping {
	/** Steps (IRE) the setting pushes below the source's black: they all show as black. */
	black: number[];
	/** Steps (IRE) the setting pushes above the source's white: they all show as white. */
	white: number[];
	/** A sentence for the panel, or null when nothing clips. */
	words: string | null;
}

export interface WhatIfResult {
	transform: Required<LevelTransform>;
	steps: LevelStepInput[];
	report: LevelReport;
	clipping: WhatIfClipping;
}

function listIre(xs: number[]): string {
	const t = xs.map(String);
	return t.length <= 1 ? t.join('') : `${t.slice(0, -1).join(', ')} and ${t[t.length - 1]}`;
}

function clippingOf(stepsIre: number[], t: LevelTransform): WhatIfClipping {
	const black: number[] = [];
	const white: number[] = [];
	for (const ire of stepsIre) {
		const x = unclippedSignalIre(ire, t);
		if (x < -CLIP_EPS_IRE) black.push(ire);
		else if (x > 100 + CLIP_EPS_IRE) white.push(ire);
	}
	const parts: string[] = [];
	if (black.length)
		parts.push(
			`${listIre(black)} IRE ${black.length > 1 ? 'fall' : 'falls'} below the source's black and ${black.length > 1 ? 'show' : 'shows'} as black (shadow detail lost)`
		);
	if (white.length)
		parts.push(
			`${listIre(white)} IRE ${white.length > 1 ? 'go' : 'goes'} past the source's white and ${white.length > 1 ? 'show' : 'shows'} as white (highlight detail lost)`
		);
	return { black, white, words: parts.length ? `This setting clips: ${parts.join('; ')}.` : null };
}

function checkTransform(t: LevelTransform): Required<LevelTransform> {
	const gain = t.gain ?? 1;
	const blackLiftIre = t.blackLiftIre ?? 0;
	const range = t.range ?? 'none';
	if (!Number.isFinite(gain) || gain <= 0 || gain > 4)
		throw new LevelInputError(`gain must be a number above 0 and at most 4, got ${gain}`);
	if (!Number.isFinite(blackLiftIre) || Math.abs(blackLiftIre) > 50)
		throw new LevelInputError(`blackLiftIre must be between -50 and 50 IRE, got ${blackLiftIre}`);
	if (!['none', 'limited-to-full', 'full-to-limited'].includes(range))
		throw new LevelInputError(`range must be 'none', 'limited-to-full' or 'full-to-limited', got ${String(range)}`);
	return { gain, blackLiftIre, range };
}

/**
 * Predict the readings if the source applied `transform` to its signal
 * before the converter, by running each step's transformed signal through
 * the measured transfer curve of each channel; returns the predicted steps
 * and their level report.
 */
export function whatIf(input: LevelInput, transform: LevelTransform, options?: AnalyzeOptions): WhatIfResult {
	const valid = validateLevelInput(input);
	const t = checkTransform(transform);
	const curves = Object.fromEntries(
		CHANNELS.map((c) => [c, valid.steps.map((s) => [s.ire, s[c]] as [number, number])])
	) as Record<Channel, Array<[number, number]>>;
	const steps = valid.steps.map((s) => {
		const x = transformSignalIre(s.ire, t); // clipped to the source's 0..100 first
		return {
			ire: s.ire,
			r: interpolateCurve(curves.r, x),
			g: interpolateCurve(curves.g, x),
			b: interpolateCurve(curves.b, x)
		};
	});
	return {
		transform: t,
		steps,
		report: analyzeLevels({ steps, fullScaleMv: valid.fullScaleMv }, options),
		clipping: clippingOf(
			valid.steps.map((s) => s.ire),
			t
		)
	};
}

export interface ChannelFit {
	/** corrected = gain * measured + offsetMv */
	gain: number;
	offsetMv: number;
	residualRmsMv: number;
	residualRmsIre: number;
}

export interface BestFitResult {
	channels: Record<Channel, ChannelFit>;
	/** Corrected readings (clamped at 0 mV). */
	steps: LevelStepInput[];
	report: LevelReport;
	/**
	 * Whether the best setting reaches RUBRIC.rescue.band or better: when it
	 * does not, what is left (the residual: a bent curve, steps out of line)
	 * is beyond any source setting.
	 */
	rescuable: boolean;
	/** A sentence for the panel. */
	verdict: string;
}

/**
 * Per-channel least-squares gain and offset mapping the measured readings
 * onto the reference ramp, with the residual RMS (what no gain/offset
 * setting can remove, e.g. a bent curve) and the report of the corrected
 * readings.
 */
export function bestFit(input: LevelInput, options?: AnalyzeOptions): BestFitResult {
	const valid = validateLevelInput(input);
	const mvPerIre = valid.fullScaleMv / 100;
	const expected = valid.steps.map((s) => s.ire * mvPerIre);
	const n = valid.steps.length;
	const channels = {} as Record<Channel, ChannelFit>;
	for (const c of CHANNELS) {
		const m = valid.steps.map((s) => s[c]);
		const mx = m.reduce((a, b) => a + b, 0) / n;
		const my = expected.reduce((a, b) => a + b, 0) / n;
		let sxx = 0;
		let sxy = 0;
		for (let i = 0; i < n; i++) {
			sxx += (m[i] - mx) ** 2;
			sxy += (m[i] - mx) * (expected[i] - my);
		}
		// A flat channel has no slope to fit: keep gain 1 and fit the offset only.
		const gain = sxx > 1e-9 ? sxy / sxx : 1;
		const offsetMv = my - gain * mx;
		let ss = 0;
		for (let i = 0; i < n; i++) ss += (gain * m[i] + offsetMv - expected[i]) ** 2;
		const residualRmsMv = Math.sqrt(ss / n);
		channels[c] = { gain, offsetMv, residualRmsMv, residualRmsIre: residualRmsMv / mvPerIre };
	}
	const steps = valid.steps.map((s) => ({
		ire: s.ire,
		r: Math.max(0, channels.r.gain * s.r + channels.r.offsetMv),
		g: Math.max(0, channels.g.gain * s.g + channels.g.offsetMv),
		b: Math.max(0, channels.b.gain * s.b + channels.b.offsetMv)
	}));
	const report = analyzeLevels({ steps, fullScaleMv: valid.fullScaleMv }, options);
	const rescuable = report.band !== null && bandRank(report.band) <= bandRank(RUBRIC.rescue.band);
	const worst = CHANNELS.reduce(
		(a, c) => (channels[c].residualRmsIre > channels[a].residualRmsIre ? c : a),
		CHANNELS[0]
	);
	const rms = channels[worst].residualRmsIre.toFixed(1);
	const name = { r: 'red', g: 'green', b: 'blue' }[worst];
	const verdict = rescuable
		? `A source setting can rescue it: with the best gain and offset per channel the levels grade ${report.band}; what no setting removes is at most ${rms} IRE RMS (${name}).`
		: `No source setting can rescue it: even the best gain and offset per channel leave ${rms} IRE RMS on ${name} (the curve itself is bent or steps are out of line), so it grades ${report.band ?? 'not graded'} at best.`;
	return { channels, steps, report, rescuable, verdict };
}
