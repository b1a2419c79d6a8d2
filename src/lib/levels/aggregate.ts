/**
 * A revision's grade from several bench runs.
 */
import type { LevelReport } from './analyze';
import { LevelInputError } from './errors';
import { BANDS, type Band } from './rubric';

export interface AggregateResult {
	count: number;
	medianScore: number;
	minScore: number;
	maxScore: number;
	/** maxScore - minScore: how much the runs disagree. */
	scoreSpread: number;
	/** Band of the median-score run (see aggregateRuns). */
	band: Band;
	/** Index (into the given reports) of the run whose band was taken. */
	medianRunIndex: number;
	bandCounts: Record<Band, number>;
	rubricVersion: string;
}

/**
 * Aggregate the level reports of one revision's bench runs.
 * Score: the median of the run scores (mean of the two middle ones for an
 * even count). Band: the band of the median-score run; with an even count,
 * the lower-scoring of the two middle runs, so two runs never average their
 * way into a better band than one of them earned. Ties in score keep the
 * worse band. All reports must share one rubric version.
 */
export function aggregateRuns(reports: LevelReport[]): AggregateResult {
	if (!Array.isArray(reports) || reports.length === 0) throw new LevelInputError('no bench runs to aggregate');
	const versions = new Set(reports.map((r) => r.rubricVersion));
	if (versions.size > 1)
		throw new LevelInputError(`bench runs were graded with different rubrics (${[...versions].join(', ')}); regrade them first`);
	const order = reports
		.map((r, i) => ({ r, i }))
		.sort((a, b) => a.r.score - b.r.score || BANDS.indexOf(b.r.band) - BANDS.indexOf(a.r.band));
	const n = order.length;
	const lo = order[Math.floor((n - 1) / 2)];
	const hi = order[Math.floor(n / 2)];
	const medianScore = Math.round(((lo.r.score + hi.r.score) / 2) * 10) / 10;
	const bandCounts = Object.fromEntries(BANDS.map((b) => [b, 0])) as Record<Band, number>;
	for (const r of reports) bandCounts[r.band]++;
	return {
		count: n,
		medianScore,
		minScore: order[0].r.score,
		maxScore: order[n - 1].r.score,
		scoreSpread: Math.round((order[n - 1].r.score - order[0].r.score) * 10) / 10,
		band: lo.r.band,
		medianRunIndex: lo.i,
		bandCounts,
		rubricVersion: reports[0].rubricVersion
	};
}
