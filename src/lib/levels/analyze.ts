/**
 * The level analysis: from per-channel readings at the grey steps to a level
 * report (deviations, spread, visible difference, tint, band, score, and
 * findings in plain words). Pure and framework-free.
 */
import { createDisplayModel, deltaE2000, hueChroma, type Bt1886Options, type DisplayModel, type Vec3 } from './colour';
import { RUBRIC, decideBand, type Band, type FailReason } from './rubric';
import { CHANNELS, CHANNEL_NAMES, validateLevelInput, type Channel, type LevelInput } from './validate';

export type Rgb<T = number> = { r: T; g: T; b: T };

export interface StepReport {
	ire: number;
	expectedMv: number;
	r: number;
	g: number;
	b: number;
	deviationMv: Rgb;
	deviationIre: Rgb;
	/** Max minus min of the three readings, in IRE. */
	spreadIre: number;
	/** CIEDE2000 between this step and its reference grey on the display model. */
	deltaE00: number;
	/**
	 * Visible colour error: CIEDE2000 between this step on the reference
	 * display and the same step with its lightness kept and its cast removed
	 * (0 when the channels agree). Used by the score.
	 */
	castDeltaE00: number;
	labMeasured: Vec3;
	labReference: Vec3;
}

export type CastDirection = 'neutral' | 'red' | 'yellow' | 'green' | 'cyan' | 'blue' | 'magenta';
export type CastSize = 'none' | 'slight' | 'clear' | 'strong';

export interface TintReading {
	ire: number;
	direction: CastDirection;
	size: CastSize;
	/** CIELAB hue angle of the cast (measured minus reference a*, b*), degrees. */
	hueDeg: number;
	/** CIELAB chroma of the cast. */
	chroma: number;
	/** e.g. 'clear blue cast' or 'neutral'. */
	words: string;
}

export interface TintReport {
	white: TintReading;
	midGrey: TintReading;
	summary: string;
}

export type LevelWarning = 'possibly-unterminated' | 'missing-steps' | 'non-monotonic';
export type FindingSeverity = 'positive' | 'info' | 'warning' | 'critical';

export interface Finding {
	code:
		| 'levels-right'
		| 'possibly-unterminated'
		| 'missing-steps'
		| 'non-monotonic'
		| 'shadows-dark'
		| 'shadows-lifted'
		| 'black-lifted'
		| 'highlights-hot'
		| 'highlights-clipped'
		| 'highlights-dim'
		| 'channel-high'
		| 'channel-low'
		| 'tint'
		| 'levels-off'
		| 'visible-difference';
	severity: FindingSeverity;
	text: string;
}

export interface NonMonotonicStep {
	channel: Channel;
	ire: number;
	mv: number;
	belowIre: number;
	belowMv: number;
}

/** Why a run has no band (see RUBRIC.unterminatedRatio). */
export type NotGradedReason = 'unterminated';

export interface LevelReport {
	rubricVersion: string;
	/** False when the run cannot be graded (band and score are then null; see notGradedReason). */
	graded: boolean;
	notGradedReason: NotGradedReason | null;
	/** null when not graded: shown as "not graded", never counted in a revision's grade. */
	band: Band | null;
	/** 0..100, higher is better; orders runs within a band (null when not graded). */
	score: number | null;
	failReasons: FailReason[];
	fullScaleMv: number;
	mvPerIre: number;
	worstDeviationIre: number;
	worstDeviation: { ire: number; channel: Channel; mv: number; deviationMv: number };
	worstSpreadIre: number;
	worstSpreadAtIre: number;
	meanAbsDeviationIre: number;
	worstDeltaE00: number;
	worstDeltaE00AtIre: number;
	/** Largest visible colour error (castDeltaE00) over the steps. */
	worstCastDeltaE00: number;
	steps: StepReport[];
	/** reading / expected at 10 and 20 IRE (null when the step was not measured). */
	shadowRatio: { at10: Rgb; at20: Rgb | null };
	/** reading / expected at 90 and 100 IRE. */
	highlightRatio: { at90: Rgb | null; at100: Rgb };
	monotonic: Rgb<boolean>;
	nonMonotonicSteps: NonMonotonicStep[];
	tint: TintReport;
	warnings: LevelWarning[];
	missingSteps: number[];
	findings: Finding[];
	display: { lw: number; lb: number; gamma: number; primaries: 'SMPTE RP 145 (SMPTE C)'; white: 'D65' };
}

export type AnalyzeOptions = Bt1886Options;

const round = (x: number, d = 2) => {
	const f = Math.pow(10, d);
	return Math.round(x * f) / f;
};
/** Numbers for sentences: whole when close to whole, else one decimal. */
export const fmt = (x: number): string => {
	const r = Math.round(x);
	return Math.abs(x - r) < 0.05 ? String(r === 0 ? 0 : r) : x.toFixed(1);
};
const pct = (x: number) => `${Math.round(x * 100)} %`;

// Hue sectors: each cast word is centred on the CIELAB hue that a small
// excess in that channel (or pair of channels) produces on the display
// model; a cast takes the word of the nearest centre. Computed rather than
// guessed, so they follow the primaries.
const HUE_CENTRES: Array<{ direction: Exclude<CastDirection, 'neutral'>; hueDeg: number }> = (() => {
	const m = createDisplayModel();
	const ref = m.labOfSignal([1, 1, 1]);
	const probe: Array<[Exclude<CastDirection, 'neutral'>, Vec3]> = [
		['red', [1.05, 1, 1]],
		['yellow', [1, 1, 0.95]],
		['green', [1, 1.05, 1]],
		['cyan', [0.95, 1, 1]],
		['blue', [1, 1, 1.05]],
		['magenta', [1, 0.95, 1]]
	];
	return probe.map(([direction, v]) => {
		const lab = m.labOfSignal(v);
		return { direction, hueDeg: hueChroma(lab[1] - ref[1], lab[2] - ref[2]).hueDeg };
	});
})();

/** The rubric's reference display (BT.1886 defaults): the score never depends on display options. */
const REFERENCE_DISPLAY: DisplayModel = createDisplayModel();

/** CIEDE2000 between a signal as displayed and the neutral grey of the same lightness. */
function castDeltaE00(model: DisplayModel, r: number, g: number, b: number): number {
	const lab = model.labOfSignal([r, g, b]);
	return deltaE2000(lab, [lab[0], 0, 0]);
}

/** Hue-sector centres used for cast words (degrees). */
export function castHueCentres(): ReadonlyArray<{ direction: CastDirection; hueDeg: number }> {
	return HUE_CENTRES;
}

function castDirection(hue: number): Exclude<CastDirection, 'neutral'> {
	let best = HUE_CENTRES[0];
	let bestD = Infinity;
	for (const c of HUE_CENTRES) {
		const d = Math.abs(((hue - c.hueDeg + 540) % 360) - 180);
		if (d < bestD) {
			bestD = d;
			best = c;
		}
	}
	return best.direction;
}

function tintOf(step: StepReport): TintReading {
	const da = step.labMeasured[1] - step.labReference[1];
	const db = step.labMeasured[2] - step.labReference[2];
	const { hueDeg, chroma } = hueChroma(da, db);
	const t = RUBRIC.tint;
	if (chroma < t.neutralBelowChroma) {
		return {
			ire: step.ire,
			direction: 'neutral',
			size: 'none',
			hueDeg: round(hueDeg, 1),
			chroma: round(chroma, 2),
			words: 'neutral'
		};
	}
	const direction = castDirection(hueDeg);
	const size: CastSize = chroma >= t.strongFromChroma ? 'strong' : chroma >= t.clearFromChroma ? 'clear' : 'slight';
	return {
		ire: step.ire,
		direction,
		size,
		hueDeg: round(hueDeg, 1),
		chroma: round(chroma, 2),
		words: `${size} ${direction} cast`
	};
}

function tintPhrase(name: string, t: TintReading): string {
	if (t.direction === 'neutral') return `${name} is neutral (chroma ${t.chroma.toFixed(1)})`;
	return `${name} has a ${t.words} (chroma ${t.chroma.toFixed(1)}, hue ${Math.round(t.hueDeg)}°)`;
}

/**
 * Analyse one bench run's readings against the reference ramp.
 * Throws LevelInputError on invalid input (see validateLevelInput).
 * @param input readings in mV at IRE steps, and the full scale (default 700 mV)
 * @param options display model for the visible-difference figures (BT.1886 Lw, Lb, gamma)
 */
export function analyzeLevels(input: LevelInput, options: AnalyzeOptions = {}): LevelReport {
	const valid = validateLevelInput(input);
	const model: DisplayModel = createDisplayModel(options);
	const reference = REFERENCE_DISPLAY;
	const fs = valid.fullScaleMv;
	const mvPerIre = fs / 100;

	const steps: StepReport[] = valid.steps.map((s) => {
		const expectedMv = mvPerIre * s.ire;
		const deviationMv = { r: s.r - expectedMv, g: s.g - expectedMv, b: s.b - expectedMv };
		const deviationIre = { r: deviationMv.r / mvPerIre, g: deviationMv.g / mvPerIre, b: deviationMv.b / mvPerIre };
		const spreadIre = (Math.max(s.r, s.g, s.b) - Math.min(s.r, s.g, s.b)) / mvPerIre;
		const labMeasured = model.labOfSignal([s.r / fs, s.g / fs, s.b / fs]);
		const v = s.ire / 100;
		const labReference = model.labOfSignal([v, v, v]);
		return {
			ire: s.ire,
			expectedMv,
			r: s.r,
			g: s.g,
			b: s.b,
			deviationMv,
			deviationIre,
			spreadIre,
			deltaE00: deltaE2000(labMeasured, labReference),
			castDeltaE00: castDeltaE00(reference, s.r / fs, s.g / fs, s.b / fs),
			labMeasured,
			labReference
		};
	});
	const at = (ire: number) => steps.find((s) => s.ire === ire) ?? null;

	// Worst figures.
	let worstDeviation = { ire: 0, channel: 'r' as Channel, mv: steps[0].r, deviationMv: 0 };
	let worstDeviationIre = -1;
	let sumAbs = 0;
	let n = 0;
	let worstSpreadIre = -1;
	let worstSpreadAtIre = 0;
	let worstLoad = 0;
	let worstDeltaE00 = -1;
	let worstDeltaE00AtIre = 0;
	let worstCastDeltaE00 = 0;
	const w = RUBRIC.score;
	for (const s of steps) {
		let stepAbs = 0;
		for (const c of CHANNELS) {
			const d = Math.abs(s.deviationIre[c]);
			sumAbs += d;
			stepAbs += d;
			n++;
			if (d > worstDeviationIre) {
				worstDeviationIre = d;
				worstDeviation = { ire: s.ire, channel: c, mv: s[c], deviationMv: s.deviationMv[c] };
			}
		}
		// Step load (RUBRIC.score): spread, deviations and the visible colour error.
		const load = s.spreadIre + stepAbs + w.colour * (s.castDeltaE00 + w.castSlope * stepAbs);
		if (load > worstLoad) worstLoad = load;
		if (s.castDeltaE00 > worstCastDeltaE00) worstCastDeltaE00 = s.castDeltaE00;
		if (s.spreadIre > worstSpreadIre) {
			worstSpreadIre = s.spreadIre;
			worstSpreadAtIre = s.ire;
		}
		if (s.deltaE00 > worstDeltaE00) {
			worstDeltaE00 = s.deltaE00;
			worstDeltaE00AtIre = s.ire;
		}
	}
	const meanAbsDeviationIre = sumAbs / n;

	// Ratios and monotonicity.
	const ratio = (s: StepReport | null): Rgb | null =>
		s && s.expectedMv > 0 ? { r: s.r / s.expectedMv, g: s.g / s.expectedMv, b: s.b / s.expectedMv } : null;
	const shadowRatio = { at10: ratio(at(10))!, at20: ratio(at(20)) };
	const highlightRatio = { at90: ratio(at(90)), at100: ratio(at(100))! };
	const monotonic: Rgb<boolean> = { r: true, g: true, b: true };
	const nonMonotonicSteps: NonMonotonicStep[] = [];
	for (let i = 1; i < steps.length; i++) {
		for (const c of CHANNELS) {
			if (steps[i][c] < steps[i - 1][c]) {
				monotonic[c] = false;
				nonMonotonicSteps.push({
					channel: c,
					ire: steps[i].ire,
					mv: steps[i][c],
					belowIre: steps[i - 1].ire,
					belowMv: steps[i - 1][c]
				});
			}
		}
	}
	const nonMonotonic = nonMonotonicSteps.length > 0;

	// Shadow deficit (only readings below expected at 10 and 20 IRE count).
	let shadowDeficit = 0;
	for (const s of [at(10), at(20)]) {
		if (!s) continue;
		for (const c of CHANNELS) shadowDeficit = Math.max(shadowDeficit, -s.deviationIre[c]);
	}

	// An unloaded line reads twice the level: grading it would compare every
	// step against the wrong scale, so such a run gets no band and no score.
	const w100 = at(100)!;
	const whiteMedian = [w100.r, w100.g, w100.b].sort((a, b) => a - b)[1];
	const unterminated =
		whiteMedian >= RUBRIC.unterminatedRatio.min * fs && whiteMedian <= RUBRIC.unterminatedRatio.max * fs;

	const minShadowRatio10 = Math.min(shadowRatio.at10.r, shadowRatio.at10.g, shadowRatio.at10.b);
	const decided = decideBand({ worstDeviationIre, worstSpreadIre, minShadowRatio10, nonMonotonic });
	const rawScore =
		100 -
		w.deviation * worstDeviationIre -
		w.load * worstLoad -
		w.mean * meanAbsDeviationIre -
		w.shadow * shadowDeficit;
	const band = unterminated ? null : decided.band;
	const failReasons = unterminated ? [] : decided.failReasons;
	const score = unterminated ? null : Math.round(Math.min(100, Math.max(0, rawScore)) * 10) / 10;

	const white = tintOf(at(100)!);
	const midGrey = tintOf(at(50)!);
	const tint: TintReport = {
		white,
		midGrey,
		summary:
			white.direction === 'neutral' && midGrey.direction === 'neutral'
				? `White and mid grey are neutral (chroma ${white.chroma.toFixed(1)} and ${midGrey.chroma.toFixed(1)}).`
				: `${tintPhrase('White', white)}; ${tintPhrase('mid grey', midGrey)}.`
	};

	const warnings: LevelWarning[] = [];
	if (unterminated) warnings.push('possibly-unterminated');
	if (valid.missingSteps.length) warnings.push('missing-steps');
	if (nonMonotonic) warnings.push('non-monotonic');

	const report: LevelReport = {
		rubricVersion: RUBRIC.version,
		graded: !unterminated,
		notGradedReason: unterminated ? 'unterminated' : null,
		band,
		score,
		failReasons,
		fullScaleMv: fs,
		mvPerIre,
		worstDeviationIre,
		worstDeviation,
		worstSpreadIre,
		worstSpreadAtIre,
		meanAbsDeviationIre,
		worstDeltaE00,
		worstDeltaE00AtIre,
		worstCastDeltaE00,
		steps,
		shadowRatio,
		highlightRatio,
		monotonic,
		nonMonotonicSteps,
		tint,
		warnings,
		missingSteps: valid.missingSteps,
		findings: [],
		display: { ...model.options, primaries: 'SMPTE RP 145 (SMPTE C)', white: 'D65' }
	};
	report.findings = buildFindings(report, whiteMedian);
	return report;
}

/** Readings of one step for a sentence: "25 mV" when the channels agree, else per channel. */
function readingWords(s: StepReport, only?: Channel[]): string {
	const vals = CHANNELS.map((c) => s[c]);
	if (Math.max(...vals) - Math.min(...vals) < 1) return `${fmt((vals[0] + vals[1] + vals[2]) / 3)} mV`;
	return (only ?? [...CHANNELS]).map((c) => `${CHANNEL_NAMES[c]} ${fmt(s[c])} mV`).join(', ');
}

function listWords(items: string[]): string {
	if (items.length <= 1) return items.join('');
	return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

const capital = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

function buildFindings(r: LevelReport, whiteMedian: number): Finding[] {
	const out: Finding[] = [];
	const F = RUBRIC.findings;
	const fs = r.fullScaleMv;
	const at = (ire: number) => r.steps.find((s) => s.ire === ire) ?? null;

	if (r.warnings.includes('possibly-unterminated')) {
		out.push({
			code: 'possibly-unterminated',
			severity: 'critical',
			text: `Not graded: white reads ${fmt(whiteMedian)} mV, about twice the ${fmt(fs)} mV expected, which is what a line without its 75 ohm load reads. Measure again into 75 ohm (a terminator at the scope, or the monitor's input in the chain).`
		});
	}
	if (r.missingSteps.length) {
		out.push({
			code: 'missing-steps',
			severity: 'info',
			text: `Not measured: ${listWords(r.missingSteps.map((x) => `${x}`))} IRE. The grade uses the other ${r.steps.length} steps.`
		});
	}
	const seenNm = new Set<Channel>();
	for (const nm of r.nonMonotonicSteps) {
		if (seenNm.has(nm.channel)) continue;
		seenNm.add(nm.channel);
		out.push({
			code: 'non-monotonic',
			severity: 'critical',
			text: `Steps out of order on ${CHANNEL_NAMES[nm.channel]}: ${fmt(nm.mv)} mV at ${nm.ire} IRE is below ${fmt(nm.belowMv)} mV at ${nm.belowIre} IRE, so a brighter grey shows darker than a dimmer one.`
		});
	}

	// On an unterminated line every level is doubled: any finding about the
	// levels would be computed against the wrong scale, so there are none.
	if (!r.graded) return out;

	// Shadows.
	const s10 = at(10)!;
	const s0 = at(0)!;
	const low10 = [...CHANNELS].filter((c) => r.shadowRatio.at10[c] < F.shadowDarkRatio);
	if (low10.length) {
		const minRatio = Math.min(...low10.map((c) => r.shadowRatio.at10[c]));
		out.push({
			code: 'shadows-dark',
			severity: minRatio < RUBRIC.shadowFloorRatio ? 'critical' : 'warning',
			text: `Shadows too dark: ${readingWords(s10, low10)} at 10 IRE where ${fmt(s10.expectedMv)} mV is expected (${pct(minRatio)} of it). Dark scenes lose detail, and turning up the monitor's brightness only makes them grey.`
		});
	}
	const high10 = [...CHANNELS].filter((c) => r.shadowRatio.at10[c] > F.shadowLiftedRatio);
	if (high10.length) {
		out.push({
			code: 'shadows-lifted',
			severity: 'warning',
			text: `Shadows lifted: ${readingWords(s10, high10)} at 10 IRE where ${fmt(s10.expectedMv)} mV is expected. Dark areas look washed out.`
		});
	}
	const lifted0 = [...CHANNELS].filter((c) => s0.deviationIre[c] > F.blackLiftIre);
	if (lifted0.length) {
		out.push({
			code: 'black-lifted',
			severity: 'warning',
			text: `Black is lifted: ${readingWords(s0, lifted0)} at 0 IRE where 0 mV is expected, so black shows as dark grey.`
		});
	}

	// Highlights (median channel; a single odd channel is a tint, handled below).
	{
		const s100 = at(100)!;
		const ratio100 = [s100.r, s100.g, s100.b].sort((a, b) => a - b)[1] / s100.expectedMv;
		if (ratio100 > F.highlightHotRatio) {
			out.push({
				code: 'highlights-hot',
				severity: 'warning',
				text: `Highlights too bright: ${readingWords(s100)} at 100 IRE where ${fmt(s100.expectedMv)} mV is expected (${pct(ratio100)}). The brightest detail clips on a monitor set up for standard levels.`
			});
		} else if (ratio100 < F.highlightDimRatio) {
			out.push({
				code: 'highlights-dim',
				severity: 'warning',
				text: `Highlights dim: ${readingWords(s100)} at 100 IRE where ${fmt(s100.expectedMv)} mV is expected (${pct(ratio100)}). Whites look greyish and the picture lacks punch.`
			});
		}
		const s90 = at(90);
		if (s90) {
			const flat = [...CHANNELS].filter((c) => (s100[c] - s90[c]) / r.mvPerIre < F.highlightFlatIre);
			if (flat.length) {
				out.push({
					code: 'highlights-clipped',
					severity: 'warning',
					text: `Highlights clipped: ${listWords(flat.map((c) => CHANNEL_NAMES[c]))} ${flat.length > 1 ? 'read' : 'reads'} ${listWords(flat.map((c) => `${fmt(s90[c])}`))} mV at 90 IRE and ${listWords(flat.map((c) => `${fmt(s100[c])}`))} mV at 100 IRE where ${fmt(s100.expectedMv - s90.expectedMv)} mV apart is expected, so detail near white is lost.`
				});
			}
		}
	}

	// A channel running high or low against the other two (step with the largest offset from the median).
	let channelFinding = false;
	for (const c of CHANNELS) {
		let best: { s: StepReport; off: number } | null = null;
		for (const s of r.steps) {
			if (s.ire === 0) continue;
			const med = [s.r, s.g, s.b].sort((a, b) => a - b)[1];
			const off = (s[c] - med) / r.mvPerIre;
			if (!best || Math.abs(off) > Math.abs(best.off)) best = { s, off };
		}
		if (!best || Math.abs(best.off) <= F.channelOffsetIre) continue;
		channelFinding = true;
		const others = CHANNELS.filter((o) => o !== c);
		const othersText =
			Math.abs(best.s[others[0]] - best.s[others[1]]) < 1
				? `${CHANNEL_NAMES[others[0]]} and ${CHANNEL_NAMES[others[1]]} read ${fmt((best.s[others[0]] + best.s[others[1]]) / 2)} mV`
				: `${CHANNEL_NAMES[others[0]]} reads ${fmt(best.s[others[0]])} mV and ${CHANNEL_NAMES[others[1]]} ${fmt(best.s[others[1]])} mV`;
		const high = best.off > 0;
		const castWord = r.tint.white.direction !== 'neutral' ? ` White shows a ${r.tint.white.words}.` : '';
		out.push({
			code: high ? 'channel-high' : 'channel-low',
			severity: 'warning',
			text: `${capital(CHANNEL_NAMES[c])} runs ${high ? 'high' : 'low'}: ${fmt(best.s[c])} mV at ${best.s.ire} IRE where ${othersText} (${fmt(Math.abs(best.off))} IRE ${high ? 'above' : 'below'} the others), which tints the picture.${castWord}`
		});
	}
	if (!channelFinding && (r.tint.white.direction !== 'neutral' || r.tint.midGrey.direction !== 'neutral')) {
		const strongest = [r.tint.white, r.tint.midGrey].some((t) => t.size === 'clear' || t.size === 'strong');
		out.push({ code: 'tint', severity: strongest ? 'warning' : 'info', text: r.tint.summary });
	}

	// Below Close with nothing above to explain why: name the worst step, so a buyer never
	// sees a poor grade without the numbers behind it.
	if (
		r.band !== 'exact' &&
		r.band !== 'close' &&
		!out.some((f) => f.severity === 'warning' || f.severity === 'critical')
	) {
		const w = r.worstDeviation;
		const expected = w.mv - w.deviationMv;
		const low = w.deviationMv < 0;
		out.push({
			code: 'levels-off',
			severity: 'warning',
			text: `Levels run ${low ? 'low' : 'high'}: ${CHANNEL_NAMES[w.channel]} reads ${fmt(w.mv)} mV at ${w.ire} IRE where ${fmt(expected)} mV is expected (${fmt(Math.abs(w.deviationMv) / r.mvPerIre)} IRE ${low ? 'under' : 'over'}). The picture looks ${low ? 'a little dim and flat' : 'a little harsh, with bright detail crowding together'}.`
		});
	}

	if (r.worstDeltaE00 > F.visibleDeltaE00) {
		out.push({
			code: 'visible-difference',
			severity: 'info',
			text: `Largest visible difference from the reference greys: ${r.worstDeltaE00.toFixed(1)} dE00 at ${r.worstDeltaE00AtIre} IRE, on a CRT display model (BT.1886, gamma ${r.display.gamma}).`
		});
	}

	if (
		(r.band === 'exact' || r.band === 'close') &&
		!out.some((f) => f.severity === 'warning' || f.severity === 'critical')
	) {
		const devMv = r.worstDeviationIre * r.mvPerIre;
		out.unshift({
			code: 'levels-right',
			severity: 'positive',
			text: `Levels ${r.band === 'exact' ? 'are right' : 'are close'}: every step is within ${r.worstDeviationIre.toFixed(1)} IRE (${fmt(devMv)} mV) of expected, the three channels agree within ${r.worstSpreadIre.toFixed(1)} IRE, and the largest visible difference is ${r.worstDeltaE00.toFixed(1)} dE00.`
		});
	}
	return out;
}
