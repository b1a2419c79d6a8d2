/**
 * The house grading rubric. This is Scopegrade's own rule set, NOT a
 * published standard: the analog video level standards (SMPTE 170M, the VESA
 * Video Signal Standard) fix the nominal levels (700 mV white into 75 ohm) but
 * give no tolerance for a converter's RGB output levels. Every threshold the
 * analysis uses lives in this one table so a change is one edit plus a new
 * version string; stored reports graded with an older version are regraded
 * automatically when migrations run.
 *
 * Versions:
 * - sg-levels-1: first rubric.
 * - sg-levels-2: a revision's band is the median of its runs' bands; runs
 *   that look unterminated are not graded; the score counts the visible
 *   colour error (cast); black up to 1 IRE below blanking is a valid
 *   reading; readings that look like volts are refused.
 */

import { BANDS, type Band } from '../enums';

/** Bands from best to worst (declared in src/lib/enums.ts); index = rank (0 best). */
export { BANDS, type Band };

export const RUBRIC = {
	version: 'sg-levels-2',
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
	 * Score = 100 - deviation * worstDeviationIre - load * worstStepLoad
	 *   - mean * meanAbsDeviationIre - shadow * worstShadowDeficitIre,
	 * clamped to 0..100 and rounded to 0.1.
	 *
	 * The step load of a step is
	 *   spread + sum|dev| + colour * (castDeltaE00 + castSlope * sum|dev|)
	 * (spread and deviations in IRE). castDeltaE00 is the visible colour error
	 * of the step: CIEDE2000 between the step as the reference display shows it
	 * and the same step with its lightness kept and its cast removed, so it is
	 * zero when the three channels agree and grows with a tint. A run whose
	 * channels disagree therefore never scores above the run that carries the
	 * mean of its deviations on all three channels (same error, no cast).
	 *
	 * Why the extra sum|dev| terms: moving a reading away from its expected
	 * value can shrink the spread (at rate 1) and the cast (at castSlope dE00
	 * per IRE at most); the sums grow at rate 1 and castSlope, so the score
	 * never rises when a reading gets worse. castSlope = 3 bounds the steepest
	 * change of the cast with one reading on the reference display (about 2.9
	 * dE00 per IRE, near 10 IRE). The colour term always uses the reference
	 * display (BT.1886 defaults), so display options never move the score.
	 *
	 * How score and band relate: the band comes from the limits in `bands`
	 * alone; the score only orders runs and revisions that share a band. A
	 * better band always ranks first, whatever the scores, and a run in a worse
	 * band can score higher than one in a better band (the limits look at the
	 * worst step only, the score at every step).
	 */
	score: { deviation: 4, load: 1.5, mean: 4, shadow: 2, colour: 0.5, castSlope: 3 },
	/** Comparisons allow this much floating-point slack (IRE). */
	epsilonIre: 1e-9,
	/**
	 * Not graded: a run whose white (median of the channels at 100 IRE) lies
	 * between these multiples of full scale looks measured without the 75 ohm
	 * load (an unloaded line reads twice the level). It gets no band and no
	 * score, only a "measure again into 75 ohm" finding; it is stored but
	 * shown as not graded and never counts towards a revision's grade.
	 */
	unterminatedRatio: { min: 1.7, max: 2.3 },
	/** How people type readings (see validate.ts). */
	readings: {
		/**
		 * A reading this far below blanking (IRE) is accepted: scopes read a
		 * few mV either side of zero at black (1 IRE = 7 mV at 700 mV full
		 * scale, common practice). Further below is refused.
		 */
		belowBlankingToleranceIre: 1.0,
		/**
		 * Readings look like volts when every value is at most `maxValue` and
		 * white (median channel at 100 IRE) is at least `whiteMin`: 0.7 typed
		 * for 700 mV. They are refused with a message asking for mV.
		 */
		voltsLike: { maxValue: 1.5, whiteMin: 0.3 }
	},
	/**
	 * A revision's grade: its band is the median of its graded runs' bands
	 * (for an even count, the worse of the two middle bands), so a run can
	 * never pull a revision into a band better than the runs deserve. Its
	 * score is the median score of the runs in that band (ordering within
	 * the band); the lowest and highest scores of all graded runs show how
	 * far the runs disagree. Runs that are not graded are counted apart.
	 */
	aggregation: 'median-band',
	/**
	 * Best fit (whatif.ts): a converter counts as rescued by a source setting
	 * when the best per-channel gain and offset bring it to this band or
	 * better; otherwise the residual is beyond what any setting can do.
	 */
	rescue: { band: 'close' as Band },
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
