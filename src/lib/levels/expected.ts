/**
 * Expected grades: what a revision nobody has measured yet is likely to grade, from the
 * accepted runs of the same chip in other revisions. A prediction, always shown as one:
 * the band is the engine's aggregate (aggregateRuns) over those runs, and the basis says
 * how many runs and converters it rests on. Pure and browser-safe.
 */
import { aggregateRuns } from './aggregate';
import type { LevelReport } from './analyze';
import { bandRank, type Band } from './rubric';

export interface ChipRun {
	revisionId: number;
	converterId: number;
	report: Pick<LevelReport, 'band' | 'score' | 'rubricVersion'> & { worstDeviationIre?: number | null };
}

export interface ExpectedGrade {
	band: Band;
	/** Worst deviation (IRE) of the run the band was taken from (for the band mark), when known. */
	deviationIre: number | null;
	runs: number;
	revisions: number;
	converters: number;
	/** e.g. 'from 6 runs of this chip in 3 other converters; not yet measured'. */
	basis: string;
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/**
 * The expected grade of revision `target` (of converter `converterId`) from the accepted runs
 * of its chip elsewhere: runs of the target revision itself are left out. Null when the chip
 * has no graded runs elsewhere, or they were graded with different rubric versions (the
 * engine refuses to mix them; only the current version's runs are used when given).
 */
export function expectedGrade(
	target: { revisionId: number; converterId: number },
	chipRuns: readonly ChipRun[],
	rubricVersion?: string
): ExpectedGrade | null {
	const others = chipRuns.filter(
		(r) => r.revisionId !== target.revisionId && (!rubricVersion || r.report.rubricVersion === rubricVersion)
	);
	if (others.length === 0) return null;
	const versions = new Set(others.map((r) => r.report.rubricVersion));
	if (versions.size > 1) return null;
	const agg = aggregateRuns(others.map((r) => r.report as LevelReport));
	// runs the engine does not grade (e.g. measured unterminated) leave nothing to expect
	if (agg.band === null || agg.medianRunIndex === null) return null;
	const otherConverters = new Set(others.filter((r) => r.converterId !== target.converterId).map((r) => r.converterId))
		.size;
	const sameConverterRevisions = new Set(
		others.filter((r) => r.converterId === target.converterId).map((r) => r.revisionId)
	).size;
	const where = [
		otherConverters ? `${plural(otherConverters, 'other converter')}` : '',
		sameConverterRevisions ? `${plural(sameConverterRevisions, 'other revision')} of this converter` : ''
	]
		.filter(Boolean)
		.join(' and ');
	return {
		band: agg.band,
		deviationIre: others[agg.medianRunIndex].report.worstDeviationIre ?? null,
		runs: others.length,
		revisions: new Set(others.map((r) => r.revisionId)).size,
		converters: new Set(others.map((r) => r.converterId)).size,
		basis: `from ${plural(others.length, 'run')} of this chip in ${where}; not yet measured`
	};
}

export interface BacktestRevision {
	revisionId: number;
	converterId: number;
	chipId: number;
	/** The measured band (the engine's aggregate of its accepted runs). */
	band: Band;
}

export interface BacktestResult {
	/** Measured revisions for which a prediction could be made. */
	predicted: number;
	/** Measured revisions whose chip has no runs elsewhere (no prediction). */
	skipped: number;
	exact: number;
	withinOne: number;
	exactRate: number | null;
	withinOneRate: number | null;
	rows: Array<{ revisionId: number; measured: Band; expected: Band; distance: number }>;
}

/**
 * Leave-one-out backtest: for each measured revision, predict its band from the runs of its
 * chip on the other revisions (as if it had not been measured) and compare with the
 * measured band. Distance is the number of bands between them.
 */
export function backtestExpected(
	measured: readonly BacktestRevision[],
	runsByChip: ReadonlyMap<number, readonly ChipRun[]>,
	rubricVersion?: string
): BacktestResult {
	const rows: BacktestResult['rows'] = [];
	let skipped = 0;
	for (const rev of measured) {
		const e = expectedGrade(rev, runsByChip.get(rev.chipId) ?? [], rubricVersion);
		if (!e) {
			skipped++;
			continue;
		}
		rows.push({
			revisionId: rev.revisionId,
			measured: rev.band,
			expected: e.band,
			distance: Math.abs(bandRank(e.band) - bandRank(rev.band))
		});
	}
	const exact = rows.filter((r) => r.distance === 0).length;
	const withinOne = rows.filter((r) => r.distance <= 1).length;
	return {
		predicted: rows.length,
		skipped,
		exact,
		withinOne,
		exactRate: rows.length ? exact / rows.length : null,
		withinOneRate: rows.length ? withinOne / rows.length : null,
		rows
	};
}
