/**
 * A revision's grade from several bench runs (RUBRIC.aggregation).
 */
import type { LevelReport } from './analyze';
import { LevelInputError } from './errors';
import { BANDS, bandRank, type Band } from './rubric';

export interface AggregateResult {
	/** Graded runs (the ones the grade comes from). */
	count: number;
	/** Runs given but not graded (e.g. measured unterminated); never counted. */
	notGradedCount: number;
	/**
	 * Median of the graded runs' bands; for an even count the worse of the two
	 * middle bands. null when no run is graded.
	 */
	band: Band | null;
	/** Median score of the graded runs in `band` (orders revisions within the band). */
	medianScore: number | null;
	/** Lowest and highest score over all graded runs, and their difference. */
	minScore: number | null;
	maxScore: number | null;
	scoreSpread: number | null;
	/** Index (into the given reports) of the run whose score is the band's median (lower middle). */
	medianRunIndex: number | null;
	bandCounts: Record<Band, number>;
	rubricVersion: string;
}

const round1 = (x: number) => Math.round(x * 10) / 10;

/**
 * Median band of a list of bands: the middle one from best to worst; for an
 * even count the worse of the two middle ones (so two runs never lift a
 * revision above the worse of them). null for an empty list.
 */
export function medianBand(bands: readonly Band[]): Band | null {
	if (bands.length === 0) return null;
	const ranks = bands.map(bandRank).sort((a, b) => a - b);
	return BANDS[ranks[bands.length >> 1]];
}

/**
 * Aggregate the level reports of one revision's bench runs. Runs without a
 * band (not graded) are left out and counted apart. All reports must share
 * one rubric version.
 */
export function aggregateRuns(reports: LevelReport[]): AggregateResult {
	if (!Array.isArray(reports) || reports.length === 0) throw new LevelInputError('no bench runs to aggregate');
	const versions = new Set(reports.map((r) => r.rubricVersion));
	if (versions.size > 1)
		throw new LevelInputError(
			`bench runs were graded with different rubrics (${[...versions].join(', ')}); regrade them first`
		);
	const graded = reports
		.map((r, i) => ({ band: r.band, score: r.score, i }))
		.filter((x): x is { band: Band; score: number; i: number } => x.band !== null && x.score !== null);
	const bandCounts = Object.fromEntries(BANDS.map((b) => [b, 0])) as Record<Band, number>;
	for (const g of graded) bandCounts[g.band]++;
	const base = {
		count: graded.length,
		notGradedCount: reports.length - graded.length,
		bandCounts,
		rubricVersion: reports[0].rubricVersion
	};
	const band = medianBand(graded.map((g) => g.band));
	if (band === null)
		return {
			...base,
			band: null,
			medianScore: null,
			minScore: null,
			maxScore: null,
			scoreSpread: null,
			medianRunIndex: null
		};

	const inBand = graded.filter((g) => g.band === band).sort((a, b) => a.score - b.score);
	const k = inBand.length;
	const lo = inBand[(k - 1) >> 1];
	const hi = inBand[k >> 1];
	const scores = graded.map((g) => g.score);
	const minScore = Math.min(...scores);
	const maxScore = Math.max(...scores);
	return {
		...base,
		band,
		medianScore: round1((lo.score + hi.score) / 2),
		minScore,
		maxScore,
		scoreSpread: round1(maxScore - minScore),
		medianRunIndex: lo.i
	};
}
