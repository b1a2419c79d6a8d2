/**
 * Bench runs and revision grades in the database. Grades are never typed in: they are
 * always what the level engine (src/lib/levels) computes from the stored readings.
 * Free of `$lib`/`$env` imports so the seed and jobs can use it under tsx.
 */
import { and, desc, eq, gt, inArray, isNotNull, isNull, ne, or } from 'drizzle-orm';
import type { Db } from './db/client';
import { RUBRIC_VERSION, aggregateRuns, analyzeLevels, type LevelReport } from '../levels/index';
import { audit } from './audit';
import * as t from './db/schema';
import { bandReasonOf } from '../components/bands';
import { refreshCards } from './queries/read-model';
import { refreshRevisionChecks } from './consistency';
import { noteGradeChange, refreshExpectedForChips } from './expected';

// Accepts both the pool-level db and a transaction.
export interface Reading {
	ire: number;
	r: number;
	g: number;
	b: number;
}

export interface NewBenchRun {
	revisionId: number;
	status: t.RunStatus;
	measuredBy: string;
	submittedById: string | null;
	measuredOn: string;
	testSource: string;
	pattern?: string;
	instrument: string;
	termination: '75-ohm' | 'unterminated' | 'unknown';
	fullScaleMv: number;
	notes?: string;
	traceFileId?: string | null;
	readings: Reading[];
}

/**
 * Analyse the readings and store the run with its report. Throws the engine's
 * LevelInputError (nothing stored) when the readings cannot be graded.
 */
export async function recordBenchRun(db: Db, run: NewBenchRun): Promise<{ id: number; report: LevelReport }> {
	const report = analyzeLevels({ steps: run.readings, fullScaleMv: run.fullScaleMv });
	const [row] = await db
		.insert(t.benchRuns)
		.values({
			revisionId: run.revisionId,
			status: run.status,
			measuredBy: run.measuredBy,
			submittedById: run.submittedById,
			measuredOn: run.measuredOn,
			testSource: run.testSource,
			pattern: run.pattern,
			instrument: run.instrument,
			termination: run.termination,
			fullScaleMv: run.fullScaleMv,
			notes: run.notes ?? '',
			traceFileId: run.traceFileId ?? null,
			report,
			band: report.band,
			score: report.score,
			rubricVersion: report.rubricVersion
		})
		.returning({ id: t.benchRuns.id });
	await db
		.insert(t.benchReadings)
		.values(run.readings.map((s) => ({ benchRunId: row.id, ire: s.ire, rMv: s.r, gMv: s.g, bMv: s.b })));
	return { id: row.id, report };
}

/**
 * Recompute a revision's cached grade from its accepted bench runs; then what depends on it, in
 * the same transaction: the grade history, the expected grades of every revision of the same
 * chip, the tester checks of this revision's runs, and the public cards (read model) of the
 * converters whose revisions changed.
 */
export async function regradeRevision(db: Db, revisionId: number, now = new Date()) {
	const [before] = await db
		.select({ band: t.revisions.band, chipId: t.revisions.chipId })
		.from(t.revisions)
		.where(eq(t.revisions.id, revisionId));
	const agg = await gradeFromRuns(db, revisionId, now);
	if (before) {
		await noteGradeChange(
			db,
			revisionId,
			'measured',
			before.band,
			agg?.band ?? null,
			agg ? `median of ${agg.count} accepted ${agg.count === 1 ? 'run' : 'runs'}` : 'no accepted runs',
			now
		);
		await refreshExpectedForChips(db, [before.chipId], now);
		// this converter and every converter whose expected grade may have moved with the chip
		const touched = await db
			.selectDistinct({ id: t.revisions.converterId })
			.from(t.revisions)
			.where(eq(t.revisions.chipId, before.chipId));
		await refreshCards(
			db,
			touched.map((r) => r.id)
		);
	}
	await refreshRevisionChecks(db, revisionId, now);
	return agg;
}

async function gradeFromRuns(db: Db, revisionId: number, now: Date) {
	const runs = await db
		.select({ id: t.benchRuns.id, fullScaleMv: t.benchRuns.fullScaleMv })
		.from(t.benchRuns)
		.where(and(eq(t.benchRuns.revisionId, revisionId), eq(t.benchRuns.status, 'accepted')));
	if (runs.length === 0) {
		await db
			.update(t.revisions)
			.set({
				band: null,
				score: null,
				scoreMin: null,
				scoreMax: null,
				deviationIre: null,
				bandReason: null,
				runCount: 0,
				gradedAt: now,
				updatedAt: now
			})
			.where(eq(t.revisions.id, revisionId));
		return null;
	}
	const readings = await db
		.select()
		.from(t.benchReadings)
		.where(
			inArray(
				t.benchReadings.benchRunId,
				runs.map((r) => r.id)
			)
		);
	const reports = runs.map((run) =>
		analyzeLevels({
			steps: readings.filter((x) => x.benchRunId === run.id).map((x) => ({ ire: x.ire, r: x.rMv, g: x.gMv, b: x.bMv })),
			fullScaleMv: run.fullScaleMv
		})
	);
	// Runs that are not graded (band null, e.g. measured unterminated) are left out by the engine.
	const agg = aggregateRuns(reports);
	// The band mark's marker: the worst deviation of the run the band was taken from (none when no run is graded).
	const lead = agg.medianRunIndex === null ? null : reports[agg.medianRunIndex];
	await db
		.update(t.revisions)
		.set({
			band: agg.band,
			score: agg.medianScore,
			scoreMin: agg.minScore,
			scoreMax: agg.maxScore,
			deviationIre: lead?.worstDeviationIre ?? null,
			bandReason: lead
				? bandReasonOf({ band: agg.band, worstDeviationIre: lead.worstDeviationIre, failReasons: lead.failReasons })
				: null,
			runCount: agg.count,
			rubricVersion: agg.rubricVersion,
			gradedAt: now,
			updatedAt: now
		})
		.where(eq(t.revisions.id, revisionId));
	return agg;
}

/**
 * The data step that follows a rubric change (run by scripts/migrate.ts after the schema
 * migrations, so every existing database catches up on its own): every bench run whose
 * stored report was made with another rubric version is analysed again from its readings,
 * and every revision graded with another version is regraded. A regrade that moves a
 * revision's band is written to the audit log (entity 'revision', action 'regraded'), which
 * is the revision's history. Idempotent: a second call finds nothing to do.
 */
export async function regradeStaleReports(
	db: Db,
	now = new Date()
): Promise<{ runs: number; revisions: number; bandChanges: number }> {
	const stale = await db
		.select({ id: t.benchRuns.id, revisionId: t.benchRuns.revisionId, fullScaleMv: t.benchRuns.fullScaleMv })
		.from(t.benchRuns)
		.where(or(isNull(t.benchRuns.rubricVersion), ne(t.benchRuns.rubricVersion, RUBRIC_VERSION)));
	const touched = new Set<number>();
	if (stale.length) {
		const readings = await db
			.select()
			.from(t.benchReadings)
			.where(
				inArray(
					t.benchReadings.benchRunId,
					stale.map((r) => r.id)
				)
			);
		const byRun = new Map<number, Array<{ ire: number; r: number; g: number; b: number }>>();
		for (const x of readings) {
			const list = byRun.get(x.benchRunId) ?? [];
			list.push({ ire: x.ire, r: x.rMv, g: x.gMv, b: x.bMv });
			byRun.set(x.benchRunId, list);
		}
		for (const run of stale) {
			const report = analyzeLevels({ steps: byRun.get(run.id) ?? [], fullScaleMv: run.fullScaleMv });
			await db
				.update(t.benchRuns)
				.set({ report, band: report.band, score: report.score, rubricVersion: report.rubricVersion })
				.where(eq(t.benchRuns.id, run.id));
			touched.add(run.revisionId);
		}
	}
	const staleRevisions = await db
		.select({ id: t.revisions.id })
		.from(t.revisions)
		.where(
			and(
				isNotNull(t.revisions.rubricVersion),
				ne(t.revisions.rubricVersion, RUBRIC_VERSION),
				gt(t.revisions.runCount, 0)
			)
		);
	for (const r of staleRevisions) touched.add(r.id);

	let bandChanges = 0;
	for (const revisionId of [...touched].sort((a, b) => a - b)) {
		const [before] = await db
			.select({
				band: t.revisions.band,
				score: t.revisions.score,
				runCount: t.revisions.runCount,
				rubricVersion: t.revisions.rubricVersion
			})
			.from(t.revisions)
			.where(eq(t.revisions.id, revisionId));
		if (!before) continue;
		await regradeRevision(db, revisionId, now);
		const [after] = await db
			.select({
				band: t.revisions.band,
				score: t.revisions.score,
				runCount: t.revisions.runCount,
				rubricVersion: t.revisions.rubricVersion
			})
			.from(t.revisions)
			.where(eq(t.revisions.id, revisionId));
		if (after.band !== before.band) {
			bandChanges++;
			await audit(db, {
				actorId: null,
				action: 'regraded',
				entity: 'revision',
				entityId: revisionId,
				before,
				after: { ...after, rubricVersion: RUBRIC_VERSION },
				reason: `Regraded under rubric ${RUBRIC_VERSION} (was ${before.rubricVersion ?? 'none'}): the band changed from ${before.band ?? 'not graded'} to ${after.band ?? 'not graded'}.`
			});
		}
	}
	return { runs: stale.length, revisions: touched.size, bandChanges };
}

/** A revision's grade history: the regrades that moved its band, newest first (from the audit log). */
export async function gradeHistory(db: Db, revisionId: number) {
	const rows = await db
		.select({ at: t.auditLog.at, before: t.auditLog.before, after: t.auditLog.after, reason: t.auditLog.reason })
		.from(t.auditLog)
		.where(
			and(
				eq(t.auditLog.entity, 'revision'),
				eq(t.auditLog.entityId, String(revisionId)),
				eq(t.auditLog.action, 'regraded')
			)
		)
		.orderBy(desc(t.auditLog.at));
	type Grade = { band: t.Band | null; score: number | null; rubricVersion: string | null };
	return rows.map((r) => ({ at: r.at, before: r.before as Grade, after: r.after as Grade, reason: r.reason ?? '' }));
}
