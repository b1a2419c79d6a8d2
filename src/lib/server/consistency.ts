/**
 * Tester consistency in the database. The statistics are the engine's (src/lib/levels/
 * proficiency.ts); this module feeds them the runs and keeps each run's check in run_check:
 *
 * - Runs that count or wait for review (accepted, pending) of a revision measured by two or
 *   more testers get z-scores against the revision's consensus per step and channel.
 * - A run whose worst |z| is an action signal (ISO 13528 section 9, |z| >= 3) is opened in
 *   the review queue with the reason; a curator keeps it, supersedes it, or asks the tester
 *   to measure again (a note the tester sees on their account page).
 * - Tester verdicts (gain and offset against the consensus) are computed on demand.
 *
 * Free of `$lib`/`$env` (grading.ts calls it from the seed and jobs too).
 */
import { and, asc, eq, inArray, isNotNull, sql } from 'drizzle-orm';
import type { Db } from './db/client';
import { revisionConsensus, testerKey, testerReport, type RunLevels, type TesterInputRevision } from '../levels/index';
import * as t from './db/schema';

/** Runs that take part in the consensus. */
const COUNTED: t.RunStatus[] = ['accepted', 'pending'];

/** Runs (in IRE) of the given revisions, or of all, grouped per revision. */
export async function loadRunLevels(
	db: Db,
	revisionIds?: number[]
): Promise<Array<TesterInputRevision & { runs: Array<RunLevels & { submittedById: string | null }> }>> {
	const runs = await db
		.select({
			id: t.benchRuns.id,
			revisionId: t.benchRuns.revisionId,
			converterId: t.revisions.converterId,
			measuredBy: t.benchRuns.measuredBy,
			submittedById: t.benchRuns.submittedById,
			fullScaleMv: t.benchRuns.fullScaleMv
		})
		.from(t.benchRuns)
		.innerJoin(t.revisions, eq(t.revisions.id, t.benchRuns.revisionId))
		.where(
			and(inArray(t.benchRuns.status, COUNTED), revisionIds ? inArray(t.benchRuns.revisionId, revisionIds) : undefined)
		)
		.orderBy(asc(t.benchRuns.id));
	if (runs.length === 0) return [];
	const readings = await db
		.select()
		.from(t.benchReadings)
		.where(
			inArray(
				t.benchReadings.benchRunId,
				runs.map((r) => r.id)
			)
		);
	const byRun = new Map<number, typeof readings>();
	for (const r of readings) byRun.set(r.benchRunId, [...(byRun.get(r.benchRunId) ?? []), r]);
	const out = new Map<number, TesterInputRevision & { runs: Array<RunLevels & { submittedById: string | null }> }>();
	for (const run of runs) {
		// mV -> IRE on the run's own full scale (7 mV per IRE at 700 mV)
		const perIre = run.fullScaleMv / 100;
		const steps = (byRun.get(run.id) ?? [])
			.sort((a, b) => a.ire - b.ire)
			.map((x) => ({ ire: x.ire, r: x.rMv / perIre, g: x.gMv / perIre, b: x.bMv / perIre }));
		const rev = out.get(run.revisionId) ?? { revisionId: run.revisionId, converterId: run.converterId, runs: [] };
		rev.runs.push({ runId: run.id, tester: run.measuredBy, submittedById: run.submittedById, steps });
		out.set(run.revisionId, rev);
	}
	return [...out.values()];
}

/**
 * Recompute the checks of one revision's runs. A run's open/kept/remeasure state survives
 * a recomputation; an open flag whose run is no longer an action signal is closed.
 */
export async function refreshRevisionChecks(db: Db, revisionId: number, now = new Date()) {
	const [rev] = await loadRunLevels(db, [revisionId]);
	const consensus = rev ? revisionConsensus(rev.runs) : null;
	const existing = await db
		.select({ benchRunId: t.runChecks.benchRunId, state: t.runChecks.state })
		.from(t.runChecks)
		.innerJoin(t.benchRuns, eq(t.benchRuns.id, t.runChecks.benchRunId))
		.where(eq(t.benchRuns.revisionId, revisionId));
	const stateOf = new Map(existing.map((e) => [e.benchRunId, e.state]));
	const keep = new Set<number>();
	for (const rz of consensus?.runs ?? []) {
		keep.add(rz.runId);
		const before = stateOf.get(rz.runId) ?? null;
		const state: t.CheckState | null = rz.signal === 'action' ? (before ?? 'open') : before === 'open' ? null : before;
		const values = {
			signal: rz.signal,
			worstZ: Math.round(rz.worstZ * 100) / 100,
			reason: rz.reason,
			cells: rz.cells.map((c) => ({
				...c,
				reading: Math.round(c.reading * 100) / 100,
				z: Math.round(c.z * 100) / 100
			})),
			testers: consensus!.testers,
			computedAt: now,
			state
		};
		await db
			.insert(t.runChecks)
			.values({ benchRunId: rz.runId, ...values })
			.onConflictDoUpdate({ target: t.runChecks.benchRunId, set: values });
	}
	// runs that left the consensus (superseded, rejected, or now the only tester's runs)
	const gone = existing.map((e) => e.benchRunId).filter((id) => !keep.has(id));
	if (gone.length) {
		// a decision already taken stays on record; only open flags and plain checks go
		const decided = existing
			.filter((e) => gone.includes(e.benchRunId) && e.state && e.state !== 'open')
			.map((e) => e.benchRunId);
		const drop = gone.filter((id) => !decided.includes(id));
		if (drop.length) await db.delete(t.runChecks).where(inArray(t.runChecks.benchRunId, drop));
	}
	return consensus;
}

/** Recompute every revision's checks (seed, and after a change of the rule). */
export async function refreshAllChecks(db: Db, now = new Date()) {
	const revs = await db.selectDistinct({ id: t.benchRuns.revisionId }).from(t.benchRuns);
	for (const r of revs) await refreshRevisionChecks(db, r.id, now);
}

/** Every tester's verdict, and the runs each one made, for the curator page. */
export async function testerOverview(db: Db) {
	const input = await loadRunLevels(db);
	const report = testerReport(input);
	const names = await db
		.select({ id: t.revisions.id, code: t.revisions.code, brand: t.converters.brand, model: t.converters.model })
		.from(t.revisions)
		.innerJoin(t.converters, eq(t.converters.id, t.revisions.converterId));
	const label = new Map(names.map((n) => [n.id, `${n.brand} ${n.model} · revision ${n.code}`]));
	const runsByTester = new Map<
		string,
		Array<{ runId: number; revisionId: number; revision: string; signal: string | null; worstZ: number | null }>
	>();
	for (const rev of report.revisions)
		for (const rz of rev.consensus.runs) {
			const k = testerKey(rz.tester);
			runsByTester.set(k, [
				...(runsByTester.get(k) ?? []),
				{
					runId: rz.runId,
					revisionId: rev.revisionId,
					revision: label.get(rev.revisionId) ?? `revision ${rev.revisionId}`,
					signal: rz.signal,
					worstZ: Math.round(rz.worstZ * 10) / 10
				}
			]);
		}
	return {
		sharedRevisions: report.revisions.length,
		testers: report.testers.map((a) => ({
			...a,
			fit: a.fit && {
				gain: a.fit.slope,
				seGain: a.fit.seSlope,
				offset: a.fit.intercept,
				seOffset: a.fit.seIntercept,
				n: a.fit.n
			},
			checkedRuns: runsByTester.get(testerKey(a.tester)) ?? []
		}))
	};
}

/** The tester names a member measured under (from the runs they submitted). */
export async function testerNamesOf(db: Db, userId: string) {
	const rows = await db
		.selectDistinct({ name: t.benchRuns.measuredBy })
		.from(t.benchRuns)
		.where(eq(t.benchRuns.submittedById, userId));
	return [...new Set(rows.map((r) => testerKey(r.name)))];
}

/** A member's own runs with their checks (the account page). */
export async function memberRunChecks(db: Db, userId: string) {
	return db
		.select({
			runId: t.benchRuns.id,
			status: t.benchRuns.status,
			measuredOn: t.benchRuns.measuredOn,
			measuredBy: t.benchRuns.measuredBy,
			revision: t.revisions.code,
			brand: t.converters.brand,
			model: t.converters.model,
			signal: t.runChecks.signal,
			worstZ: t.runChecks.worstZ,
			reason: t.runChecks.reason,
			state: t.runChecks.state,
			note: t.runChecks.note
		})
		.from(t.benchRuns)
		.innerJoin(t.revisions, eq(t.revisions.id, t.benchRuns.revisionId))
		.innerJoin(t.converters, eq(t.converters.id, t.revisions.converterId))
		.leftJoin(t.runChecks, eq(t.runChecks.benchRunId, t.benchRuns.id))
		.where(eq(t.benchRuns.submittedById, userId))
		.orderBy(asc(t.benchRuns.measuredOn), asc(t.benchRuns.id));
}

/** Checks of the given runs (the panel on each bench run). */
export async function checksOfRuns(db: Db, runIds: number[]) {
	if (runIds.length === 0) return new Map<number, typeof t.runChecks.$inferSelect>();
	const rows = await db.select().from(t.runChecks).where(inArray(t.runChecks.benchRunId, runIds));
	return new Map(rows.map((r) => [r.benchRunId, r]));
}

/** Runs flagged as an action signal and not yet decided: the review queue's section. */
export async function openFlags(db: Db) {
	return db
		.select({
			runId: t.benchRuns.id,
			revisionId: t.benchRuns.revisionId,
			revision: t.revisions.code,
			brand: t.converters.brand,
			model: t.converters.model,
			measuredBy: t.benchRuns.measuredBy,
			measuredOn: t.benchRuns.measuredOn,
			status: t.benchRuns.status,
			band: t.benchRuns.band,
			score: t.benchRuns.score,
			worstDeviationIre: sql<number | null>`(${t.benchRuns.report}->>'worstDeviationIre')::float8`,
			worstZ: t.runChecks.worstZ,
			reason: t.runChecks.reason,
			testers: t.runChecks.testers,
			computedAt: t.runChecks.computedAt
		})
		.from(t.runChecks)
		.innerJoin(t.benchRuns, eq(t.benchRuns.id, t.runChecks.benchRunId))
		.innerJoin(t.revisions, eq(t.revisions.id, t.benchRuns.revisionId))
		.innerJoin(t.converters, eq(t.converters.id, t.revisions.converterId))
		.where(and(eq(t.runChecks.state, 'open'), isNotNull(t.runChecks.state)))
		.orderBy(asc(t.runChecks.computedAt));
}
