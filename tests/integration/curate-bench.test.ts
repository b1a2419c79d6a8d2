/**
 * Bench runs through the curator workspace's action modules: a trace is read by the
 * engine and fills the grid; a bad trace keeps what was typed and shows the engine's own
 * error; saving regrades the revision; member runs count only once accepted; superseded
 * runs stop counting but stay.
 */
import { readFileSync } from 'node:fs';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as t from '../../src/lib/server/db/schema';
import { readTraceAction, saveRunAction } from '../../src/lib/server/curate/bench-actions';
import { reviewBenchRun, supersedeBenchRun } from '../../src/lib/server/curate/bench';
import { createChip, createConverter, createRevision } from '../../src/lib/server/curate/catalogue';
import { importTrace, LevelInputError } from '../../src/lib/levels/index';
import { auditRows, curateWorld } from './helpers/curate-world';

let w: Awaited<ReturnType<typeof curateWorld>>;
let revisionId: number;
let converterId: number;

const fixture = (name: string) => readFileSync(new URL(`../../fixtures/traces/${name}`, import.meta.url));

function meta(extra: Record<string, string> = {}) {
	const fd = new FormData();
	const base: Record<string, string> = {
		revisionId: String(revisionId),
		measuredBy: 'Test Curator',
		measuredOn: '2025-03-14',
		testSource: 'Pattern generator, 480p grey ramp',
		pattern: '11-step grey ramp, 0-100 IRE',
		instrument: 'Bench scope, 10x probe',
		termination: '75-ohm',
		fullScaleMv: '700',
		notes: 'typed before the upload',
		...extra
	};
	for (const [k, v] of Object.entries(base)) fd.set(k, v);
	return fd;
}

function grid(fd: FormData, steps: Array<{ ire: number; r: number; g: number; b: number }>) {
	for (const s of steps) {
		fd.set(`r${s.ire}`, String(s.r));
		fd.set(`g${s.ire}`, String(s.g));
		fd.set(`b${s.ire}`, String(s.b));
	}
	return fd;
}

const exact = Array.from({ length: 11 }, (_, i) => ({ ire: i * 10, r: i * 70, g: i * 70, b: i * 70 }));
const crushed = exact.map((s) => (s.ire <= 20 ? { ...s, r: s.r * 0.35, g: s.g * 0.35, b: s.b * 0.35 } : s));

beforeAll(async () => {
	w = await curateWorld('curate_bench');
	const chip = await createChip(w.db, w.curator, { name: 'TST-101', maker: 'Test Maker', slug: '', notes: '' });
	const conv = await createConverter(w.db, w.curator, {
		brand: 'Testbrand',
		model: 'Box One',
		slug: '',
		summary: '',
		hasAudioOut: false,
		power: 'usb-bus',
		outputs: ['vga']
	});
	converterId = conv.id;
	const rev = await createRevision(w.db, w.curator, {
		converterId: conv.id,
		code: 'A',
		chipId: chip.id,
		boardMarking: 'TB-01',
		seenFrom: '2024-01-01',
		seenTo: '',
		notes: ''
	});
	revisionId = rev.id;
});
afterAll(async () => w?.close());

describe('reading a trace', () => {
	it('fills the grid from good-3ch.csv with the engine’s plateaus and a level report', async () => {
		const fd = meta();
		fd.set('trace', new File([fixture('good-3ch.csv')], 'good-3ch.csv', { type: 'text/csv' }));
		const res = await readTraceAction(w.db, w.storage, w.curator, fd);
		if ('status' in res) throw new Error(`refused: ${JSON.stringify(res.data)}`);
		const direct = importTrace(fixture('good-3ch.csv').toString('utf8'));
		expect((res.form.data as Record<string, unknown>).r100).toBe(direct.steps[10].r);
		expect((res.form.data as Record<string, unknown>).g50).toBe(direct.steps[5].g);
		expect(res.form.data.notes).toBe('typed before the upload');
		expect(res.preview.plateaus.r).toHaveLength(11);
		expect(res.preview.report?.band).toMatch(/exact|close/);
		expect(res.preview.fileIds).toHaveLength(1);
		const [file] = await w.db.select().from(t.files).where(eq(t.files.id, res.preview.fileIds[0]));
		expect(file).toMatchObject({ kind: 'trace', status: 'pending', ownerId: w.curator.id });
		expect(await w.storage.exists(file.storageKey)).toBe(true);
	});

	it('a trace without the step pattern keeps every typed value and shows the engine’s error; nothing is stored', async () => {
		const before = await w.db.select().from(t.files);
		const fd = meta({ measuredBy: 'Kept Name', instrument: 'Kept Scope' });
		fd.set('trace', new File([fixture('bad-flat.csv')], 'bad-flat.csv', { type: 'text/csv' }));
		const res = await readTraceAction(w.db, w.storage, w.curator, fd);
		expect('status' in res && res.status).toBe(400);
		const data = (res as { data: { form: { data: Record<string, unknown> }; traceError: string } }).data;
		let engineMessage = '';
		try {
			importTrace(fixture('bad-flat.csv').toString('utf8'));
		} catch (err) {
			engineMessage = (err as LevelInputError).message;
		}
		expect(engineMessage).toMatch(/plateaus/);
		expect(data.traceError).toBe(engineMessage);
		expect(data.form.data).toMatchObject({
			measuredBy: 'Kept Name',
			instrument: 'Kept Scope',
			notes: 'typed before the upload'
		});
		expect(await w.db.select().from(t.files)).toHaveLength(before.length);
	});

	it('refuses a binary file posing as a trace', async () => {
		const fd = meta();
		fd.set(
			'trace',
			new File([new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13])], 'scope.csv')
		);
		const res = await readTraceAction(w.db, w.storage, w.curator, fd);
		expect('status' in res && res.status).toBe(415);
		expect((res as { data: { traceError: string } }).data.traceError).toMatch(/PNG image, not a CSV/);
	});
});

describe('saving', () => {
	it('a curator’s run is accepted, regrades the revision and marks the converter reviewed', async () => {
		await w.db
			.update(t.converters)
			.set({ lastReviewedAt: new Date('2020-01-01') })
			.where(eq(t.converters.id, converterId));
		const res = await saveRunAction(w.db, w.curator, grid(meta(), exact));
		expect(res.ok).toBe(true);
		const [rev] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, revisionId));
		expect(rev).toMatchObject({ band: 'exact', runCount: 1 });
		const [conv] = await w.db.select().from(t.converters).where(eq(t.converters.id, converterId));
		expect(conv.lastReviewedAt!.getTime()).toBeGreaterThan(Date.parse('2024-01-01'));
		const audits = await auditRows(w.db, 'bench_run');
		expect(audits.at(-1)).toMatchObject({ action: 'created', actorId: w.curator.id });
	});

	it('a half-filled grid row is a 400 that keeps the values', async () => {
		const fd = grid(meta(), exact);
		fd.delete('b30');
		const res = await saveRunAction(w.db, w.curator, fd);
		expect(res.ok).toBe(false);
		if (res.ok) return;
		expect(res.failure.status).toBe(400);
		const form = res.failure.data.form as { data: Record<string, unknown>; message: { text: string } };
		expect(form.message.text).toMatch(/30 IRE has 2 of 3 channels/);
		expect(form.data.r30).toBe(210);
	});

	it('missing required details give field errors', async () => {
		const res = await saveRunAction(w.db, w.curator, grid(meta({ instrument: '', measuredOn: '14/03/2025' }), exact));
		expect(res.ok).toBe(false);
		if (res.ok) return;
		const form = res.failure.data.form as { errors: Record<string, string[]>; data: Record<string, unknown> };
		expect(form.errors.instrument?.[0]).toMatch(/Instrument is required/);
		expect(form.errors.measuredOn?.[0]).toMatch(/use a date like/);
		expect(form.data.testSource).toBe('Pattern generator, 480p grey ramp');
	});

	it('a member’s run waits as pending and counts only once accepted', async () => {
		const res = await saveRunAction(w.db, w.member, grid(meta(), crushed));
		expect(res.ok && res.status).toBe('pending');
		if (!res.ok) return;
		let [rev] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, revisionId));
		expect(rev).toMatchObject({ band: 'exact', runCount: 1 });
		await reviewBenchRun(w.db, w.curator, { id: res.id, decision: 'accept', reason: 'Readings look plausible' });
		[rev] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, revisionId));
		expect(rev.runCount).toBe(2);
		await expect(reviewBenchRun(w.db, w.curator, { id: res.id, decision: 'reject', reason: 'again' })).rejects.toThrow(
			/already accepted/
		);
	});

	it('superseding a run keeps it but regrades without it', async () => {
		const runs = await w.db.select().from(t.benchRuns).where(eq(t.benchRuns.revisionId, revisionId));
		const crushedRun = runs.find((r) => r.band === 'failing')!;
		// from another revision's page the run is not found, and stays as it was
		await expect(
			supersedeBenchRun(w.db, w.curator, { id: crushedRun.id, reason: 'Wrong page' }, new Date(), revisionId + 1000)
		).rejects.toMatchObject({ status: 404 });
		const [untouched] = await w.db.select().from(t.benchRuns).where(eq(t.benchRuns.id, crushedRun.id));
		expect(untouched.status).toBe(crushedRun.status);
		await supersedeBenchRun(w.db, w.curator, { id: crushedRun.id, reason: 'Measured without the load' });
		const [rev] = await w.db.select().from(t.revisions).where(eq(t.revisions.id, revisionId));
		expect(rev).toMatchObject({ band: 'exact', runCount: 1 });
		const [kept] = await w.db.select().from(t.benchRuns).where(eq(t.benchRuns.id, crushedRun.id));
		expect(kept.status).toBe('superseded');
		const audits = await auditRows(w.db, 'bench_run');
		expect(audits.at(-1)).toMatchObject({ action: 'superseded', reason: 'Measured without the load' });
	});
});
