/**
 * The house grading rubric. This is Scopegrade's own rule set, NOT a
 * published standard: the analog video level standards (SMPTE 170M, the VESA
 * Video Signal Standard) fix the nominal levels (700 mV white into 75 ohm) but
 * give no tolerance for a converter's RGB output levels. Every threshold the analysis uses lives in
 * this one table so a change is one edit plus a new version string.
 */

export type Band = 'exact' | 'close' | 'fair' | 'poor' | 'failing';

/** Bands from best to worst; index = rank (0 best). */
export const BANDS: readonly Band[] = ['exact', 'close', 'fair', 'poor', 'failing'] as const;

export const RUBRIC = {
	version: 'sg-levels-1',
	/**
	 * A band needs BOTH: worst deviation (any step, any channel) and worst
	 * channel spread (any step) at or under its limits, in IRE.
	 */
	bands: [
		{ band: 'exact', maxDeviationIre: 1.0, maxSpreadIre: 1.0 },
		{ band: 'close', maxDeviationIre: 2.0, maxSpreadIre: 1.5 },
		{ band: 'fair', maxDeviationIre: 3.5, maxSpreadIre: 2.5 },
		{ band: 'poor', maxDeviationIre: 6.0, maxSpreadIre: 4.0 }
	] as const,
	/** Any channel at 10 IRE below this fraction of its expected level fails outright. */
	shadowFloorRatio: 0.6,
	/** A non-monotonic step (a step reading lower than the one below) fails outright. */
	nonMonotonicFails: true,
	/**
	 * Score = 100 - deviation * worstDeviationIre - load * worstStepLoadIre
	 *   - mean * meanAbsDeviationIre - shadow * worstShadowDeficitIre,
	 * clamped to 0..100 and rounded to 0.1. The step load of a step is its
	 * channel spread plus the sum of its channels' absolute deviations: spread
	 * alone can shrink when a reading moves away from its expected value (the
	 * channels may come closer together), and adding the sum of absolute
	 * deviations (which grows at rate 1 while spread falls at rate at most 1)
	 * keeps the score from ever rising when a reading gets worse.
	 */
	score: { deviation: 4, load: 1.5, mean: 4, shadow: 2 },
	/** Comparisons allow this much floating-point slack (IRE). */
	epsilonIre: 1e-9,
	/** Unterminated line: white (median of channels) between these multiples of full scale. */
	unterminatedRatio: { min: 1.7, max: 2.3 },
	findings: {
		/** Shadow ratio at 10 IRE below this: "shadows too dark". */
		shadowDarkRatio: 0.9,
		/** Shadow ratio at 10 IRE above this, or black above blackLiftIre: "lifted". */
		shadowLiftedRatio: 1.15,
		blackLiftIre: 2.0,
		/** Highlight ratio at 100 IRE above this: highlights clip on the monitor. */
		highlightHotRatio: 1.03,
		/** Highlight ratio at 100 IRE below this: dim highlights. */
		highlightDimRatio: 0.97,
		/** 90 and 100 IRE closer than this (IRE): top step flattened. */
		highlightFlatIre: 3.0,
		/** A channel this far (IRE) from the mean of the other two at a step: runs high/low. */
		channelOffsetIre: 1.5,
		/** Worst dE00 above which the visible difference gets its own finding. */
		visibleDeltaE00: 2.0
	},
	tint: {
		/** CIELAB chroma of the cast below which a grey counts as neutral. */
		neutralBelowChroma: 1.0,
		/** Chroma at or above which a cast is 'clear', then 'strong'. */
		clearFromChroma: 3.0,
		strongFromChroma: 8.0
	}
} as const;

export const RUBRIC_VERSION = RUBRIC.version;

/** Inputs the band decision needs. */
export interface BandInputs {
	worstDeviationIre: number;
	worstSpreadIre: number;
	/** Lowest reading/expected ratio at 10 IRE over the channels. */
	minShadowRatio10: number;
	nonMonotonic: boolean;
}

/** Why a report landed in 'failing' (empty for other bands). */
export type FailReason = 'deviation-or-spread' | 'shadow-floor' | 'non-monotonic';

/** Apply the rubric: the first band whose two limits both hold, else failing. */
export function decideBand(x: BandInputs): { band: Band; failReasons: FailReason[] } {
	const eps = RUBRIC.epsilonIre;
	const failReasons: FailReason[] = [];
	if (x.minShadowRatio10 < RUBRIC.shadowFloorRatio - 1e-12) failReasons.push('shadow-floor');
	if (RUBRIC.nonMonotonicFails && x.nonMonotonic) failReasons.push('non-monotonic');
	const hit = RUBRIC.bands.find(
		(b) => x.worstDeviationIre <= b.maxDeviationIre + eps && x.worstSpreadIre <= b.maxSpreadIre + eps
	);
	if (!hit) failReasons.unshift('deviation-or-spread');
	if (failReasons.length > 0) return { band: 'failing', failReasons };
	return { band: hit!.band, failReasons };
}

/** Rank of a band, 0 = exact (best) .. 4 = failing. */
export function bandRank(band: Band): number {
	return BANDS.indexOf(band);
}
