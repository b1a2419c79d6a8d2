/**
 * Level-grade bands (Scopegrade's own house rubric, not a published standard) and the
 * figures the band mark draws: a deviation ruler from 0 to beyond 6 IRE with a tick at each
 * band's deviation limit and a marker at the worst deviation. Order is best to worst.
 * Pure TypeScript: safe to import anywhere (the browser, the e-mail templates, the API).
 */
import { BANDS, isOneOf, type Band } from '../enums';
import { RUBRIC } from '../levels/rubric';

// The list itself is declared once, in src/lib/enums.ts.
export { BANDS, type Band };

export const BAND_LABELS: Readonly<Record<Band, string>> = {
	exact: 'Exact',
	close: 'Close',
	fair: 'Fair',
	poor: 'Poor',
	failing: 'Failing'
};

/** One plain-words line per band, for tooltips, legends and learn pages. */
export const BAND_SUMMARIES: Readonly<Record<Band, string>> = {
	exact: 'Levels match the reference; nothing to see on a CRT.',
	close: 'Small level errors most eyes will not notice.',
	fair: 'Visible on some scenes; fine for casual play.',
	poor: 'Clearly off: dark or bright detail or colour suffers.',
	failing: 'Crushed shadows, clipped highlights, a strong cast or broken steps.'
};

export function isBand(value: unknown): value is Band {
	return isOneOf(BANDS, value);
}

/** "Exact" ... "Failing"; null or unknown -> "Not graded". */
export function bandLabel(band: Band | null | undefined): string {
	return band && isBand(band) ? BAND_LABELS[band] : 'Not graded';
}

/** 0 for Exact ... 4 for Failing; ungraded sorts last (5). */
export function bandRank(band: Band | null | undefined): number {
	return band && isBand(band) ? BANDS.indexOf(band) : BANDS.length;
}

/** A band set by a rule or a limit rather than by where the deviation falls on the ruler. */
export const BAND_REASONS = ['crushed', 'reversed', 'spread'] as const;
export type BandReason = (typeof BAND_REASONS)[number];

/**
 * The reason word shown beside the band. 'crushed': a channel's 10 IRE step is below the
 * rubric's shadow floor; 'reversed': a step reads lower than the one below it (both fail
 * outright, so the ruler shows no marker); 'spread': the channels disagree by more than the
 * band the deviation alone would earn allows (the marker stays at the deviation).
 */
export const BAND_REASON_WORDS: Readonly<Record<BandReason, string>> = {
	crushed: 'crushed',
	reversed: 'reversed step',
	spread: 'spread'
};

export function isBandReason(value: unknown): value is BandReason {
	return typeof value === 'string' && (BAND_REASONS as readonly string[]).includes(value);
}

/** The ruler's ticks: each graded band's deviation limit in IRE, from the rubric (1, 2, 3.5, 6). */
export const RULER_TICKS_IRE: readonly number[] = RUBRIC.bands.map((b) => b.maxDeviationIre);

/** The ruler's right end (IRE). Deviations beyond it sit at the end, past the last tick. */
export const RULER_END_IRE = 8;

/** Where a deviation sits on the ruler, 0 (left end) to 1 (right end, "beyond"). */
export function rulerFraction(deviationIre: number): number {
	if (!Number.isFinite(deviationIre) || deviationIre <= 0) return 0;
	return Math.min(deviationIre, RULER_END_IRE) / RULER_END_IRE;
}

/** A band mark's ruler drawing at one size: every mark of that size draws the same ruler. */
export interface RulerGeometry {
	/** ruler length, drawing height, baseline y, tick height, marker half-width (px) */
	w: number;
	h: number;
	base: number;
	tick: number;
	m: number;
	/** room for half the marker at either end of the ruler */
	pad: number;
	/** the baseline and a tick at 0 and at each band limit, as one path */
	rules: string;
	/** the baseline past the last tick ("beyond 6 IRE"), drawn dashed */
	beyond: string;
}

export type RulerSize = 'sm' | 'md';

/** The x of a deviation on a ruler (px). */
export function rulerX(g: RulerGeometry, ire: number): number {
	return g.pad + rulerFraction(ire) * g.w;
}

function buildRuler(size: RulerSize): RulerGeometry {
	const d = size === 'sm' ? { w: 64, h: 14, base: 10, tick: 4, m: 4.5 } : { w: 96, h: 18, base: 13, tick: 5, m: 5.5 };
	const g: RulerGeometry = { ...d, pad: d.m + 1, rules: '', beyond: '' };
	const ticks = RULER_TICKS_IRE.map((ire) => rulerX(g, ire));
	const last = ticks[ticks.length - 1];
	g.rules =
		[g.pad, ...ticks].map((x) => `M${x} ${d.base - d.tick}V${d.h - 1}`).join('') + `M${g.pad} ${d.base}H${last}`;
	g.beyond = `M${last} ${d.base}H${g.pad + d.w}`;
	return Object.freeze(g);
}

// built once: a catalogue page draws about 70 marks
const RULERS: Readonly<Record<RulerSize, RulerGeometry>> = { sm: buildRuler('sm'), md: buildRuler('md') };

export function rulerGeometry(size: RulerSize): RulerGeometry {
	return RULERS[size];
}

/** The id of the shared drawing of a ruler (GlyphSprite.svelte), for `<use href="#…">`. */
export const rulerGlyphId = (size: RulerSize) => `sg-ruler-${size}`;

/** The deviation zone a band covers on the ruler, [from, to] in IRE (Failing: past 6 IRE). */
export function bandZoneIre(band: Band): [number, number] {
	const i = BANDS.indexOf(band);
	const from = i === 0 ? 0 : RULER_TICKS_IRE[i - 1];
	const to = i < RULER_TICKS_IRE.length ? RULER_TICKS_IRE[i] : RULER_END_IRE;
	return [from, to];
}

/** The band a deviation alone would earn (ignoring the spread limit and the fail rules). */
export function bandForDeviation(deviationIre: number): Band {
	const i = RULER_TICKS_IRE.findIndex((limit) => deviationIre <= limit + RUBRIC.epsilonIre);
	return i === -1 ? 'failing' : BANDS[i];
}

/**
 * Why a level report's band is not simply where its deviation falls, or null when it is.
 * Takes the engine's report fields (band, worst deviation, fail reasons).
 */
export function bandReasonOf(report: {
	band: Band | null;
	worstDeviationIre: number | null;
	failReasons?: readonly string[] | null;
}): BandReason | null {
	if (!report.band) return null;
	const rules = report.failReasons ?? [];
	if (report.band === 'failing' && rules.includes('shadow-floor')) return 'crushed';
	if (report.band === 'failing' && rules.includes('non-monotonic')) return 'reversed';
	if (report.worstDeviationIre === null) return null;
	return bandRank(report.band) > bandRank(bandForDeviation(report.worstDeviationIre)) ? 'spread' : null;
}

/** What a band mark shows: the band, the worst deviation and the reason (all may be missing). */
export interface GradeMark {
	band: Band | null;
	deviationIre?: number | null;
	reason?: BandReason | string | null;
	/** An expected grade (from other converters' runs on the same chip), not a measured one. */
	expected?: boolean;
}

/** A rule decided the band (or there is none): the ruler shows the reason word, not a marker. */
export function markHidesMarker(m: GradeMark): boolean {
	return (
		!m.band ||
		m.reason === 'crushed' ||
		m.reason === 'reversed' ||
		typeof m.deviationIre !== 'number' ||
		!Number.isFinite(m.deviationIre)
	);
}

/** "1.3 IRE" */
export function formatIre(ire: number): string {
	return `${ire.toFixed(1)} IRE`;
}

/**
 * The words beside the ruler, also its accessible name: "Close · 1.3 IRE",
 * "Failing · crushed", "Poor · 3.4 IRE · spread", "Expected Fair · 2.6 IRE", "Not graded".
 */
export function markText(m: GradeMark): string {
	if (!m.band || !isBand(m.band)) return m.expected ? 'No expected grade' : 'Not graded';
	const parts = [(m.expected ? 'Expected ' : '') + BAND_LABELS[m.band]];
	const reason = isBandReason(m.reason) ? m.reason : null;
	if (reason === 'crushed' || reason === 'reversed') parts.push(BAND_REASON_WORDS[reason]);
	else if (typeof m.deviationIre === 'number' && Number.isFinite(m.deviationIre)) {
		parts.push(formatIre(m.deviationIre));
		if (reason === 'spread') parts.push(BAND_REASON_WORDS.spread);
	}
	return parts.join(' · ');
}

/** Accessible label of the mark: the same words, saying what the figure is. */
export function markAriaLabel(m: GradeMark): string {
	const text = markText(m);
	if (!m.band) return `Level grade: ${text}`;
	const reason = isBandReason(m.reason) ? m.reason : null;
	if (reason === 'crushed' || reason === 'reversed') return `Level grade: ${text}`;
	if (typeof m.deviationIre !== 'number' || !Number.isFinite(m.deviationIre)) return `Level grade: ${text}`;
	const figure = `${m.expected ? 'Expected ' : ''}${BAND_LABELS[m.band]} · ${formatIre(m.deviationIre)} worst deviation`;
	return reason === 'spread' ? `Level grade: ${figure} · spread: the channels disagree` : `Level grade: ${figure}`;
}

/** How a band mark is asked to draw: a grade, or (zone) a band's range with no measurement. */
export interface BandMarkInput extends GradeMark {
	/** 'band' shades the band's own zone (legends), 'at-least' everything up to its limit (a watch) */
	zone?: 'band' | 'at-least';
	size: RulerSize;
	/** accessible label in place of the grade's words */
	label?: string;
}

/** Everything a band mark draws, worked out once per mark (BandMark.svelte renders it). */
export interface BandMarkView {
	ruler: RulerGeometry;
	text: string;
	aria: string;
	/** the shaded zone on the ruler, as x and width (px), or null */
	zone: { x: number; width: number } | null;
	/** the marker's x (px) at the worst deviation, or null when a rule or no grade hides it */
	markerX: number | null;
	/** the deviation is past the ruler's end: an arrow at the right end */
	beyond: boolean;
}

function zoneWords(band: Band, zone: 'band' | 'at-least'): string {
	const [from, to] = bandZoneIre(band);
	if (zone === 'at-least') return band === 'failing' ? 'any amount' : `${to} IRE`;
	return band === 'failing' ? `over ${from} IRE` : `${from} to ${to} IRE`;
}

export function bandMarkView(m: BandMarkInput): BandMarkView {
	const ruler = rulerGeometry(m.size);
	const { band, zone } = m;
	const text =
		zone === 'at-least' && band ? `${bandLabel(band)} or better` : zone === 'band' ? bandLabel(band) : markText(m);
	const aria = m.label
		? m.label
		: zone && band
			? `Level grade ${text}: worst deviation ${zone === 'at-least' ? 'up to' : 'from'} ${zoneWords(band, zone)}`
			: markAriaLabel(m);
	const showMarker = !zone && !markHidesMarker(m);
	const deviation = showMarker ? (m.deviationIre as number) : 0;
	const range = !band
		? null
		: zone === 'at-least'
			? [0, bandZoneIre(band)[1]]
			: zone === 'band' || showMarker
				? bandZoneIre(band)
				: null;
	const zoneBox = range
		? { x: rulerX(ruler, range[0]), width: Math.max(1, rulerX(ruler, range[1]) - rulerX(ruler, range[0])) }
		: null;
	return {
		ruler,
		text,
		aria,
		zone: zoneBox,
		markerX: showMarker ? Math.round(rulerX(ruler, deviation) * 100) / 100 : null,
		beyond: showMarker && deviation > RULER_END_IRE
	};
}

/** Band mark props for one engine level report (a bench run, a what-if result). */
export function reportMark(report: {
	band: Band | null;
	worstDeviationIre: number;
	failReasons?: readonly string[] | null;
}): { band: Band | null; deviation: number; reason: BandReason | null } {
	return { band: report.band, deviation: report.worstDeviationIre, reason: bandReasonOf(report) };
}
