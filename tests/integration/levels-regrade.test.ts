/**
 * A rubric change reaches stored data by itself: scripts/migrate.ts runs regradeStaleReports
 * after the schema migrations. Reports made with an older rubric are recomputed from the
 * stored readings, revisions are regraded (median of the runs' bands, house rubric
 * sg-levels-2), unterminated runs stay stored but ungraded, and a band that moves is written
 * to the revision's history (the audit log).
 */
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as t from '../../src/lib/server/db/schema';
import { recordBenchRun, regradeRevision, regradeStaleReports } from '../../src/lib/server/grading';
import { RUBRIC_VERSION } from '../../src/lib/levels/index';
import { freshDatabase } from './helpers/db';

let w: Awaited<ReturnType<typeof freshDatabase>>;
let revisionId: number;

const ramp = (f: (ire: number) => [number, number, number]) =>
	Array.from({ length: 11 }, (_, k) => {
		const [r, g, b] = f(k * 10);
		return { ire: k * 10, r, g, b };
	});
const perfect = (ire: number) => [7 * ire, 7 * ire, 7 * ire] as [number, number, number];
// Close (50 IRE 10 mV high), Poor (35 mV high) and Failing (crushed 10 IRE) runs.
const close = ramp((i) => (i === 50 ? [360, 360, 360] : perfect(i)));
const poor = ramp((i) => (i === 50 ? [385, 385, 385] : perfect(i)));
const failing = ramp((i) => (i === 10 ? [25, 25, 25] : perfect(i)));
const unterminated = ramp((i) => [14 * i, 14 * i, 14 * i]);

function run(readings: ReturnType<typeof ramp>, termination: '75-ohm' | 'unknown' = '75-ohm') {
	return {
		revisionId,
		status: 'accepted' as const,
		measuredBy: 'Test Bench',
		submittedById: null,
		measuredOn: '2026-01-10',
		testSource: 'pattern generator',
		instrument: 'bench scope',
		termination,
		fullScaleMv: 700,
		readings
	};
}

beforeAll(async () => {
	w = await freshDatabase('sg_it_levels_regrade');
	const [chip] = await w.db.insert(t.chips).values({ slug: 'qx-1', name: 'QX-1', maker: 'Test Maker' }).returning();
	const [conv] = await w.db
		.insert(t.converters)
		.values({ slug: 'box-one', brand: 'Testbrand', model: 'Box One' })
		.returning();
	const [rev] = await w.db.insert(t.revisions).values({ converterId: conv.id, code: 'A', chipId: chip.id }).returning();
	revisionId = rev.id;
});
afterAll(async () => w?.close());

describe('regradeStaleReports (the data step after a rubric change)', () => {
	it('recomputes old reports, regrades the revision by the median band and writes the band change to its history', async () => {
		const ids: number[] = [];
		for (const r of [close, poor, failing]) ids.push((await recordBenchRun(w.db, run(r))).id);
		const bad = await recordBenchRun(w.db, run(unterminated, 'unknown'));
		// Pretend everything was stored under the previous rubric, where the median-score run
		// decided the band (a Failing result for Close, Poor and Failing runs).
		await w.db
			.update(t.benchRuns)
			.set({ rubricVersion: 'sg-levels-1', band: 'poor', score: 50 })
			.where(eq(t.benchRuns.id, bad.id));
		await w.db.update(t.benchRuns).set({ rubricVersion: 'sg-levels-1' }).where(eq(t.benchRuns.revisionId, revisionId));
		await w.db
			.update(t.revisions)
			.set({ band: 'failing', score: 30, runCount: 4, rubricVersion: 'sg-levels-1' })
			.where(eq(t.revisions.id, revisionId));

		const done = await w.db.transaction((tx) => regradeStaleReports(tx, new Date('2026-02-01T00:00:00Z')));
		expect(done).toEqual({ runs: 4, revisions: 1, bandChanges: 1 });

		const [rev] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, revisionId));
		expect(rev).toMatchObject({ band: 'poor', runCount: 3, rubricVersion: RUBRIC_VERSION });
		const runs = await w.db.select().from(t.benchRuns).where(eq(t.benchRuns.revisionId, revisionId));
		expect(runs.every((r) => r.rubricVersion === RUBRIC_VERSION)).toBe(true);
		// the unterminated run is kept, with no band and a report that says why
		const kept = runs.find((r) => r.id === bad.id)!;
		expect(kept.band).toBeNull();
		expect(kept.score).toBeNull();
		expect((kept.report as { graded: boolean; findings: Array<{ code: string }> }).graded).toBe(false);
		expect((kept.report as { findings: Array<{ code: string }> }).findings[0].code).toBe('possibly-unterminated');

		const history = await w.db
			.select()
			.from(t.auditLog)
			.where(and(eq(t.auditLog.entity, 'revision'), eq(t.auditLog.entityId, String(revisionId))));
		expect(history).toHaveLength(1);
		expect(history[0]).toMatchObject({ action: 'regraded', actorId: null });
		expect(history[0].before).toMatchObject({ band: 'failing', rubricVersion: 'sg-levels-1' });
		expect(history[0].after).toMatchObject({ band: 'poor', rubricVersion: RUBRIC_VERSION });
		expect(history[0].reason).toMatch(/band changed from failing to poor/);
	});

	it('is idempotent: a second run finds nothing to do and writes no history', async () => {
		expect(await regradeStaleReports(w.db)).toEqual({ runs: 0, revisions: 0, bandChanges: 0 });
		const history = await w.db.select().from(t.auditLog).where(eq(t.auditLog.entity, 'revision'));
		expect(history).toHaveLength(1);
	});

	it('a revision whose only runs are unterminated is not graded; a black a few mV below blanking is stored as read', async () => {
		const [rev2] = await w.db
			.insert(t.revisions)
			.values({
				converterId: (await w.db.select().from(t.converters))[0].id,
				code: 'B',
				chipId: (await w.db.select().from(t.chips))[0].id
			})
			.returning();
		await recordBenchRun(w.db, { ...run(unterminated), revisionId: rev2.id });
		const agg = await regradeRevision(w.db, rev2.id);
		expect(agg).toMatchObject({ band: null, count: 0, notGradedCount: 1 });
		const [row] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, rev2.id));
		expect(row).toMatchObject({ band: null, score: null, runCount: 0 });

		const below = ramp((i) => (i === 0 ? [-4, -2.5, 0] : perfect(i)));
		const { id } = await recordBenchRun(w.db, { ...run(below), revisionId: rev2.id });
		const readings = await w.db
			.select()
			.from(t.benchReadings)
			.where(and(eq(t.benchReadings.benchRunId, id), eq(t.benchReadings.ire, 0)));
		expect(readings[0]).toMatchObject({ rMv: -4, gMv: -2.5, bMv: 0 });
		expect((await regradeRevision(w.db, rev2.id))!.band).toBe('exact');
	});
});
