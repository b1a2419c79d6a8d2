/**
 * Level-grade bands (Scopegrade's own house rubric, not a published standard).
 * Order is best to worst. Pure TypeScript: safe to import anywhere.
 */
export const BANDS = ['exact', 'close', 'fair', 'poor', 'failing'] as const;

export type Band = (typeof BANDS)[number];

/** Number of segments in the band mark's level meter. */
export const BAND_METER_SEGMENTS = 5;

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
	return typeof value === 'string' && (BANDS as readonly string[]).includes(value);
}

/** "Exact" ... "Failing"; null or unknown -> "Not graded". */
export function bandLabel(band: Band | null | undefined): string {
	return band && isBand(band) ? BAND_LABELS[band] : 'Not graded';
}

/** Filled meter segments: Exact 5, Close 4, Fair 3, Poor 2, Failing 1, none 0. */
export function bandSegments(band: Band | null | undefined): number {
	if (!band || !isBand(band)) return 0;
	return BAND_METER_SEGMENTS - BANDS.indexOf(band);
}

/** 0 for Exact ... 4 for Failing; ungraded sorts last (5). */
export function bandRank(band: Band | null | undefined): number {
	return band && isBand(band) ? BANDS.indexOf(band) : BANDS.length;
}

/** Sort comparator, best band first, ungraded last. */
export function compareBands(a: Band | null | undefined, b: Band | null | undefined): number {
	return bandRank(a) - bandRank(b);
}

/** True when `band` is `min` or better (e.g. "Close or better"). */
export function bandAtLeast(band: Band | null | undefined, min: Band): boolean {
	return bandRank(band) <= bandRank(min);
}

/** Accessible text for a band mark, e.g. "Band: Close (4 of 5), score 82". */
export function bandAriaLabel(band: Band | null | undefined, score?: number | null): string {
	if (!band || !isBand(band)) return 'Band: Not graded';
	let text = `Band: ${BAND_LABELS[band]} (${bandSegments(band)} of ${BAND_METER_SEGMENTS})`;
	if (typeof score === 'number' && Number.isFinite(score)) text += `, score ${Math.round(score)}`;
	return text;
}
