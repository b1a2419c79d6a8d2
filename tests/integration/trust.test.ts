/**
 * Tester consistency and expected grades end to end on a real database: three testers
 * measure the same revisions, one scope reads 5 % high; that tester's runs are flagged and
 * decided on; an unmeasured revision of the same chip carries an expected grade until its
 * own run is accepted, and its history keeps both. The statistics are checked in
 * tests/unit/levels/proficiency.test.ts; here the wiring.
 */
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as t from '../../src/lib/server/db/schema';
import { reviewBenchRun, saveBenchRun } from '../../src/lib/server/curate/bench';
import { createChip, createConverter, createRevision, updateRevision } from '../../src/lib/server/curate/catalogue';
import { decideFlag } from '../../src/lib/server/curate/run-checks';
import type { BenchRunForm } from '../../src/lib/server/curate/schemas';
import { checksOfRuns, memberRunChecks, openFlags, testerOverview } from '../../src/lib/server/consistency';
import { gradeHistoryOf, latestBacktest, runAndStoreBacktest } from '../../src/lib/server/expected';
import { seededRandom } from '../../src/lib/demo/scenario';
import { auditRows, curateWorld } from './helpers/curate-world';
import { exportCatalogue, loadCatalogue } from '../../src/lib/server/queries/public';
import { apiConverter } from '../../src/lib/server/queries/public-api';
import { filterCatalogue } from '../../src/lib/finder';
import { loadCataloguePage } from '../../src/lib/server/queries/read-model';
import { BANDS, bandRank, type Band } from '../../src/lib/components/bands';

let w: Awaited<ReturnType<typeof curateWorld>>;
const revs: Array<{ id: number; converterId: number; chipId: number }> = [];
let otherChipId: number;
const runIds: Record<string, number[]> = { Ada: [], Bram: [], Cleo: [] };
const rand = seededRandom(2026);

function form(revisionId: number, measuredBy: string, gain: number): BenchRunForm {
	const f: Record<string, unknown> = {
		revisionId,
		measuredBy,
		measuredOn: '2025-06-01',
		testSource: 'Pattern generator, 480p grey ramp',
		pattern: '11-step grey ramp, 0-100 IRE',
		instrument: 'Bench scope, 10x probe',
		termination: '75-ohm',
		fullScaleMv: 700,
		notes: ''
	};
	for (let ire = 0; ire <= 100; ire += 10)
		for (const c of ['r', 'g', 'b'])
			f[`${c}${ire}`] = Math.max(0, Math.round((7 * ire * gain + (rand() - 0.5) * 3) * 10) / 10);
	return f as BenchRunForm;
}

beforeAll(async () => {
	w = await curateWorld('trust_checks');
	const chip = await createChip(w.db, w.curator, { name: 'QT-7', maker: 'Test Maker', slug: '', notes: '' });
	const other = await createChip(w.db, w.curator, { name: 'QT-8', maker: 'Test Maker', slug: '', notes: '' });
	otherChipId = other.id;
	for (let i = 1; i <= 5; i++) {
		const conv = await createConverter(w.db, w.curator, {
			brand: 'Testbrand',
			model: `Box ${i}`,
			slug: '',
			summary: '',
			hasAudioOut: false,
			power: 'usb-bus',
			outputs: ['vga']
		});
		const rev = await createRevision(w.db, w.curator, {
			converterId: conv.id,
			code: 'A',
			chipId: chip.id,
			boardMarking: '',
			seenFrom: '',
			seenTo: '',
			notes: ''
		});
		revs.push({ id: rev.id, converterId: conv.id, chipId: chip.id });
	}
	// revisions 1-3: all three testers; Cleo's scope reads 5 % high
	for (const rev of revs.slice(0, 3))
		for (const [name, gain] of [
			['Ada', 1],
			['Bram', 1],
			['Cleo', 1.05]
		] as const)
			runIds[name].push((await saveBenchRun(w.db, w.curator, form(rev.id, name, gain))).id);
	// revision 4: Ada alone; revision 5: not measured
	await saveBenchRun(w.db, w.curator, form(revs[3].id, 'Ada', 1));
});
afterAll(async () => w?.close());

describe('tester checks', () => {
	it('scores every run of a shared revision and opens a flag only for the action signals', async () => {
		const checks = await checksOfRuns(w.db, Object.values(runIds).flat());
		expect(checks.size).toBe(9);
		for (const id of [...runIds.Ada, ...runIds.Bram]) expect(checks.get(id)!.signal).not.toBe('action');
		const cleo = runIds.Cleo.map((id) => checks.get(id)!);
		expect(cleo.every((c) => c.signal === 'action' && c.state === 'open' && c.worstZ >= 3)).toBe(true);
		expect(cleo[0].reason).toMatch(
			/^\d+ IRE (red|green|blue) reads [\d.]+ IRE above the consensus of 3 runs by 3 testers/
		);
		const flags = await openFlags(w.db);
		expect(flags.map((f) => f.runId).sort()).toEqual([...runIds.Cleo].sort());
		// Ada's solo revision has no one to compare with
		const [solo] = await w.db
			.select({ id: t.benchRuns.id })
			.from(t.benchRuns)
			.where(eq(t.benchRuns.revisionId, revs[3].id));
		expect((await checksOfRuns(w.db, [solo.id])).size).toBe(0);
	});

	it('flags exactly the tester whose scope reads high, in plain words', async () => {
		const o = await testerOverview(w.db);
		expect(o.testers.filter((x) => x.flagged).map((x) => x.tester)).toEqual(['Cleo']);
		const cleo = o.testers[0];
		expect(cleo.verdict).toMatch(
			/^Reads about [45] % high across 3 converters: check the scope's vertical calibration and the 75 ohm load\.$/
		);
		expect(cleo.fit!.gain).toBeGreaterThan(1.035);
		expect(cleo.runs).toBe(3);
		expect(cleo.checkedRuns).toHaveLength(3);
		for (const x of o.testers.slice(1)) expect(x.status).toBe('consistent');
	});

	it('lets a curator keep, supersede, or send back a flagged run, once, with a note the tester sees', async () => {
		const [keepId, supersedeId, remeasureId] = runIds.Cleo;
		await decideFlag(w.db, w.curator, { id: keepId, decision: 'keep', note: 'Cross-checked with a second probe' });
		await decideFlag(w.db, w.curator, {
			id: remeasureId,
			decision: 'remeasure',
			note: 'Please check the scope calibration and measure again'
		});
		await decideFlag(w.db, w.curator, { id: supersedeId, decision: 'supersede', note: 'Scope was out of calibration' });
		await expect(
			decideFlag(w.db, w.curator, { id: keepId, decision: 'supersede', note: 'again' })
		).rejects.toMatchObject({ status: 409 });
		await expect(
			decideFlag(w.db, w.curator, { id: runIds.Ada[0], decision: 'keep', note: 'not flagged' })
		).rejects.toMatchObject({ status: 409 });
		expect(await openFlags(w.db)).toHaveLength(0);
		const [sup] = await w.db.select().from(t.benchRuns).where(eq(t.benchRuns.id, supersedeId));
		expect(sup.status).toBe('superseded');
		const checks = await checksOfRuns(w.db, runIds.Cleo);
		expect(checks.get(supersedeId)!.state).toBe('superseded');
		expect(checks.get(keepId)!.state).toBe('kept');
		// the curator saved these runs, so the curator's account shows them with the notes
		const mine = await memberRunChecks(w.db, w.curator.id);
		expect(mine.find((r) => r.runId === remeasureId)).toMatchObject({
			state: 'remeasure',
			note: 'Please check the scope calibration and measure again'
		});
		const log = (await auditRows(w.db, 'bench_run')).filter((r) => r.action.startsWith('flag-'));
		expect(log.map((r) => r.action).sort()).toEqual(['flag-keep', 'flag-remeasure', 'flag-supersede']);
	});

	it("checks a member's pending run against the others while it waits, and closes flags it caused", async () => {
		const { id } = await saveBenchRun(w.db, w.member, form(revs[0].id, 'Test Member', 1.1));
		const check = (await checksOfRuns(w.db, [id])).get(id)!;
		expect(check.signal).toBe('action');
		expect(check.reason).toMatch(/above the consensus of 4 runs by 4 testers/);
		// With four runs, two of them high (Cleo's kept run and this one), Algorithm A's
		// consensus moves up and the good runs can become action signals too: they are opened
		// with the same honesty, and closed again once the new run is rejected.
		const open = (await openFlags(w.db)).map((f) => f.runId);
		expect(open).toContain(id);
		expect(open.every((x) => [id, runIds.Ada[0], runIds.Bram[0]].includes(x))).toBe(true);
		await reviewBenchRun(w.db, w.curator, { id, decision: 'reject', reason: 'Reads far too high' });
		expect((await checksOfRuns(w.db, [id])).size).toBe(0);
		expect(await openFlags(w.db)).toHaveLength(0);
	});
});

describe('expected grades', () => {
	it('gives the unmeasured revision an expected band with its basis', async () => {
		const [r5] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, revs[4].id));
		expect(r5.band).toBeNull();
		expect(r5.expectedBand).not.toBeNull();
		// runs that count elsewhere: 2 + 3 + 2 (one of Cleo's superseded) + Ada's solo run
		expect(r5.expectedBasis).toBe('from 9 runs of this chip in 4 other converters; not yet measured');
		const [r1] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, revs[0].id));
		expect(r1.expectedBand).toBeNull();
	});

	it('shows in the catalogue, the API (expected beside band) and the CSV export, apart from measured grades', async () => {
		const view = { region: 'eu' as const, currency: 'EUR' };
		const entry = (await loadCatalogue(w.db, view)).find((e) => e.id === revs[4].converterId)!;
		expect(entry.bestBand).toBeNull();
		expect(entry.expected?.basis).toBe('from 9 runs of this chip in 4 other converters; not yet measured');
		const api = apiConverter(entry);
		expect(api.band).toBeNull();
		expect(api.expected).toEqual(entry.expected);
		expect(api.revisions[0]).toMatchObject({ band: null, expected: { band: entry.expected!.band } });
		// measured only by default; the visitor's tick lets it through
		const all = await loadCatalogue(w.db, view);
		expect(filterCatalogue(all, { minBand: 'failing' }).map((e) => e.id)).not.toContain(revs[4].converterId);
		expect(filterCatalogue(all, { minBand: 'failing', includeExpected: true }).map((e) => e.id)).toContain(
			revs[4].converterId
		);
		// The cards' SQL ranks the expected band the same way: it meets its own band as the lowest
		// band, and not the band above it.
		const atLeast = async (minBand: Band) =>
			(
				await loadCataloguePage(w.db, view, { sort: 'band', minBand, includeExpected: true }, { pageSize: 5000 })
			).entries.map((e) => e.id);
		const expectedBand = entry.expected!.band;
		expect(await atLeast(expectedBand)).toContain(revs[4].converterId);
		const better = BANDS[bandRank(expectedBand) - 1];
		if (better) expect(await atLeast(better)).not.toContain(revs[4].converterId);
		const csv = (await exportCatalogue(w.db)).find((r) => r.revision_id === revs[4].id)!;
		expect(csv).toMatchObject({
			band: null,
			expected_band: entry.expected!.band,
			expected_basis: entry.expected!.basis
		});
		const measured = (await exportCatalogue(w.db)).find((r) => r.revision_id === revs[0].id)!;
		expect(measured.expected_band).toBeNull();
	});

	it('moves with the chip, and gives way to the measured grade while the history keeps both', async () => {
		const r5 = revs[4];
		const base = { converterId: r5.converterId, code: 'A', boardMarking: '', seenFrom: '', seenTo: '', notes: '' };
		await updateRevision(w.db, w.curator, r5.id, { ...base, chipId: otherChipId });
		let [row] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, r5.id));
		expect(row.expectedBand).toBeNull();
		await updateRevision(w.db, w.curator, r5.id, { ...base, chipId: r5.chipId });
		[row] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, r5.id));
		const expectedBand = row.expectedBand;
		expect(expectedBand).not.toBeNull();
		await saveBenchRun(w.db, w.curator, form(r5.id, 'Bram', 1));
		[row] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, r5.id));
		expect(row.band).not.toBeNull();
		expect(row.expectedBand).toBeNull();
		expect(row.expectedBasis).toBeNull();
		const history = await gradeHistoryOf(w.db, [r5.id]);
		expect(history.map((h) => [h.kind, h.band])).toEqual([
			['expected', expectedBand],
			['expected', null],
			['expected', expectedBand],
			['measured', row.band],
			['expected', null]
		]);
		expect(history.at(-1)!.detail).toMatch(/measured grade replaces/);
	});

	it('stores the leave-one-out backtest for the learn page', async () => {
		const res = await runAndStoreBacktest(w.db, new Date('2026-01-02T03:04:05Z'));
		expect(res.predicted).toBe(5);
		expect(res.withinOneRate).not.toBeNull();
		const stored = await latestBacktest(w.db);
		expect(stored).toMatchObject({
			predicted: 5,
			exactRate: res.exactRate,
			withinOneRate: res.withinOneRate,
			computedAt: '2026-01-02T03:04:05.000Z'
		});
	});
});
