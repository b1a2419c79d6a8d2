/**
 * Expected grades in the database: a revision with no accepted run gets the engine's aggregate
 * of its chip's accepted runs elsewhere (src/lib/levels/expected.ts), stored on the revision
 * (expected_band, expected_basis). Recomputed for the whole chip whenever a grade of that
 * chip changes (regradeRevision) or a revision moves between chips. Every change of a
 * measured or expected band is written to grade_history, so a revision's history shows the
 * expected grade it had before it was measured.
 *
 * Also the leave-one-out backtest (`npm run report:expected`), whose latest result is kept in
 * stat_snapshot for the learn page. Free of `$lib`/`$env` so jobs and scripts can use it.
 */
import { and, asc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { Db } from './db/client';
import { RUBRIC_VERSION, backtestExpected, expectedGrade, type BacktestResult, type ChipRun } from '../levels/index';
import * as t from './db/schema';
import { idArray, inIdList, preparedFor } from './db/prepared';

export const BACKTEST_SNAPSHOT = 'expected-backtest';

/** Accepted runs (band, score, rubric) per chip, for the given chips or all. */
async function chipRuns(db: Db, chipIds?: number[]): Promise<Map<number, ChipRun[]>> {
	const rows = await db
		.select({
			chipId: t.revisions.chipId,
			revisionId: t.benchRuns.revisionId,
			converterId: t.revisions.converterId,
			band: t.benchRuns.band,
			score: t.benchRuns.score,
			rubricVersion: t.benchRuns.rubricVersion,
			worstDeviationIre: sql<number | null>`(${t.benchRuns.report} ->> 'worstDeviationIre')::float8`
		})
		.from(t.benchRuns)
		.innerJoin(t.revisions, eq(t.revisions.id, t.benchRuns.revisionId))
		.where(and(eq(t.benchRuns.status, 'accepted'), chipIds ? inArray(t.revisions.chipId, chipIds) : undefined));
	const out = new Map<number, ChipRun[]>();
	for (const r of rows) {
		if (!r.band || r.score === null || !r.rubricVersion) continue;
		const list = out.get(r.chipId) ?? [];
		list.push({
			revisionId: r.revisionId,
			converterId: r.converterId,
			report: { band: r.band, score: r.score, rubricVersion: r.rubricVersion, worstDeviationIre: r.worstDeviationIre }
		});
		out.set(r.chipId, list);
	}
	return out;
}

/** Write a grade_history row when a revision's measured or expected band changes. */
export async function noteGradeChange(
	db: Db,
	revisionId: number,
	kind: t.GradeKind,
	before: t.Band | null,
	after: t.Band | null,
	detail: string,
	at: Date
) {
	if (before === after) return;
	await db.insert(t.gradeHistory).values({ revisionId, kind, band: after, detail, at });
}

/**
 * Recompute the expected grade of every revision of these chips: set for a live revision
 * with no accepted run and runs of its chip elsewhere, cleared otherwise.
 */
export async function refreshExpectedForChips(db: Db, chipIds: number[], now = new Date()) {
	const ids = [...new Set(chipIds)];
	if (ids.length === 0) return;
	const runs = await chipRuns(db, ids);
	const revs = await db
		.select({
			id: t.revisions.id,
			chipId: t.revisions.chipId,
			converterId: t.revisions.converterId,
			runCount: t.revisions.runCount,
			retiredAt: t.revisions.retiredAt,
			expectedBand: t.revisions.expectedBand,
			expectedBasis: t.revisions.expectedBasis,
			expectedDeviationIre: t.revisions.expectedDeviationIre
		})
		.from(t.revisions)
		.where(inArray(t.revisions.chipId, ids));
	for (const rev of revs) {
		const e =
			rev.runCount === 0 && !rev.retiredAt
				? expectedGrade(
						{ revisionId: rev.id, converterId: rev.converterId },
						runs.get(rev.chipId) ?? [],
						RUBRIC_VERSION
					)
				: null;
		const band = e?.band ?? null;
		const basis = e?.basis ?? null;
		const deviation = e?.deviationIre ?? null;
		if (band === rev.expectedBand && basis === rev.expectedBasis && deviation === rev.expectedDeviationIre) continue;
		await db
			.update(t.revisions)
			.set({
				expectedBand: band,
				expectedBasis: basis,
				expectedDeviationIre: deviation,
				expectedRuns: e?.runs ?? null,
				expectedAt: e ? now : null
			})
			.where(eq(t.revisions.id, rev.id));
		const detail = e
			? e.basis
			: rev.runCount > 0
				? 'measured: the measured grade replaces the expected one'
				: 'no runs of this chip elsewhere';
		await noteGradeChange(db, rev.id, 'expected', rev.expectedBand, band, detail, now);
	}
}

export async function refreshExpectedForRevision(db: Db, revisionId: number, now = new Date()) {
	const [rev] = await db.select({ chipId: t.revisions.chipId }).from(t.revisions).where(eq(t.revisions.id, revisionId));
	if (rev) await refreshExpectedForChips(db, [rev.chipId], now);
}

/** Recompute every expected grade (seed, migrations of the rule). */
export async function refreshAllExpected(db: Db, now = new Date()) {
	const chips = await db.select({ id: t.chips.id }).from(t.chips);
	await refreshExpectedForChips(
		db,
		chips.map((c) => c.id),
		now
	);
}

/** A revision's grade history, oldest first. */
export async function gradeHistoryOf(db: Db, revisionIds: number[]) {
	if (revisionIds.length === 0) return [];
	return preparedFor(db, 'grade_history_of', () =>
		db
			.select()
			.from(t.gradeHistory)
			.where(inIdList(t.gradeHistory.revisionId, 'ids'))
			.orderBy(asc(t.gradeHistory.at), asc(t.gradeHistory.id))
			.prepare('grade_history_of')
	).execute({ ids: idArray(revisionIds) });
}

/** Leave-one-out backtest over every measured live revision of the catalogue. */
export async function backtestCatalogue(db: Db): Promise<BacktestResult> {
	const measured = await db
		.select({
			revisionId: t.revisions.id,
			converterId: t.revisions.converterId,
			chipId: t.revisions.chipId,
			band: t.revisions.band
		})
		.from(t.revisions)
		.where(and(isNull(t.revisions.retiredAt)));
	const runs = await chipRuns(db);
	return backtestExpected(
		measured.filter((m): m is typeof m & { band: t.Band } => m.band !== null),
		runs,
		RUBRIC_VERSION
	);
}

export interface StoredBacktest {
	predicted: number;
	skipped: number;
	exactRate: number | null;
	withinOneRate: number | null;
	computedAt: string;
}

/** Run the backtest and keep its figures (not the rows) for the learn page. */
export async function runAndStoreBacktest(db: Db, now = new Date()): Promise<BacktestResult> {
	const res = await backtestCatalogue(db);
	const value = {
		predicted: res.predicted,
		skipped: res.skipped,
		exactRate: res.exactRate,
		withinOneRate: res.withinOneRate
	};
	await db
		.insert(t.statSnapshots)
		.values({ name: BACKTEST_SNAPSHOT, value, computedAt: now })
		.onConflictDoUpdate({ target: t.statSnapshots.name, set: { value, computedAt: now } });
	return res;
}

export async function latestBacktest(db: Db): Promise<StoredBacktest | null> {
	const [row] = await db.select().from(t.statSnapshots).where(eq(t.statSnapshots.name, BACKTEST_SNAPSHOT));
	if (!row) return null;
	return { ...(row.value as Omit<StoredBacktest, 'computedAt'>), computedAt: row.computedAt.toISOString() };
}
