/**
 * Bench runs in the curator workspace: readings typed into the grid or read from scope
 * traces, a preview of the level report before anything is saved, saving (which regrades
 * the revision), superseding, and the review of runs members submit.
 *
 * Grades always come from the engine: recordBenchRun analyses, regradeRevision aggregates
 * the accepted runs. Nothing here writes a band by hand.
 */
import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import { audit } from '../audit';
import * as t from '../db/schema';
import { recordBenchRun, regradeRevision, type Reading } from '../grading';
import { refreshRevisionChecks } from '../consistency';
import {
	ALL_STEPS_IRE,
	LevelInputError,
	analyzeLevels,
	importTrace,
	traceToLevelInput,
	type Channel,
	type LevelReport,
	type TraceImport
} from '../../levels/index';
import type { Storage } from '../storage/index';
import { FieldError, type Actor, type Database } from './common';
import { readingKey, type BenchRunForm } from './schemas';
import { checkTrace, ownFile, setFilesStatus, storeTrace } from './uploads';
import { hasRole } from '../../roles';

const CH: Channel[] = ['r', 'g', 'b'];

/** Grid fields -> readings. A row may be left empty (a missing step); a half-filled row is an error. */
export function readingsFromForm(form: Partial<BenchRunForm>): Reading[] {
	const out: Reading[] = [];
	const problems: string[] = [];
	for (const ire of ALL_STEPS_IRE) {
		const vals = CH.map((c) => form[readingKey(c, ire)] as number | undefined | null);
		const have = vals.filter((v) => typeof v === 'number' && Number.isFinite(v));
		if (have.length === 0) continue;
		if (have.length < 3) {
			problems.push(`${ire} IRE has ${have.length} of 3 channels filled in: give R, G and B, or leave the row empty.`);
			continue;
		}
		out.push({ ire, r: vals[0]!, g: vals[1]!, b: vals[2]! });
	}
	if (problems.length) throw new LevelInputError(problems[0], problems);
	return out;
}

/** Readings -> grid fields (for filling the grid from a trace). */
export function formFromReadings(steps: Array<{ ire: number; r?: number; g?: number; b?: number }>) {
	const out: Record<string, number | undefined> = {};
	for (const s of steps) for (const c of CH) out[readingKey(c, s.ire)] = s[c];
	return out;
}

export interface TraceUpload {
	/** 'all' for one file with every channel, or the channel a single-channel file carries. */
	slot: 'all' | Channel;
	name: string;
	bytes: Uint8Array;
}

/** What the page draws: plateaus over the trace, plus the filled-in readings. */
export interface TracePreview {
	fileIds: string[];
	names: string[];
	steps: TraceImport['steps'];
	noiseMv: number;
	warnings: string[];
	channels: TraceImport['channels'];
	plateaus: TraceImport['plateaus'];
	samples: { time: number[]; mv: Partial<Record<Channel, number[]>> } | null;
	report: LevelReport | null;
	reportError: string | null;
	copiedChannels: boolean;
}

const MAX_DRAWN = 1500;
function thin(samples: TraceImport['samples']): TracePreview['samples'] {
	if (!samples) return null;
	const stride = Math.max(1, Math.ceil(samples.time.length / MAX_DRAWN));
	const pick = (xs: number[]) => xs.filter((_, i) => i % stride === 0).map((x) => Math.round(x * 1e9) / 1e9);
	return {
		time: pick(samples.time),
		mv: Object.fromEntries(
			Object.entries(samples.mv).map(([k, v]) => [k, pick(v!).map((x) => Math.round(x * 10) / 10)])
		)
	};
}

/**
 * Read one multi-channel trace, or one file per channel, with the engine's importTrace.
 * Nothing is stored when any file is refused or does not show the step pattern: the
 * LevelInputError / FieldError says why.
 */
export function readTraces(uploads: TraceUpload[], fullScaleMv = 700): Omit<TracePreview, 'fileIds'> {
	if (uploads.length === 0) throw new FieldError('trace', 'Choose a CSV trace file (or one per channel).');
	const whole = uploads.filter((u) => u.slot === 'all');
	if (whole.length && uploads.length > 1)
		throw new FieldError('trace', 'Give either one file with all channels or one file per channel, not both.');
	let merged: TraceImport;
	if (whole.length) {
		const text = checkTrace(whole[0].name, whole[0].bytes);
		merged = importTrace(text);
	} else {
		const parts = uploads.map((u) => {
			const text = checkTrace(u.name, u.bytes, `trace_${u.slot}`);
			try {
				return { slot: u.slot as Channel, imp: importTrace(text, { channels: [u.slot as Channel] }) };
			} catch (err) {
				if (err instanceof LevelInputError) throw new LevelInputError(`${u.name}: ${err.message}`, err.issues);
				throw err;
			}
		});
		for (const p of parts) {
			if (p.imp.channels.length !== 1)
				throw new FieldError(
					`trace_${p.slot}`,
					`${uploads.find((u) => u.slot === p.slot)!.name} has ${p.imp.channels.length} voltage columns; a per-channel file has one.`
				);
		}
		merged = {
			steps: ALL_STEPS_IRE.map((ire, i) => {
				const s: TraceImport['steps'][number] = { ire };
				for (const p of parts) s[p.slot] = p.imp.steps[i][p.slot];
				return s;
			}),
			noiseMv: Math.max(...parts.map((p) => p.imp.noiseMv)),
			warnings: [...new Set(parts.flatMap((p) => p.imp.warnings))],
			plateaus: Object.fromEntries(parts.map((p) => [p.slot, p.imp.plateaus[p.slot]])),
			channels: parts.map((p) => p.imp.channels[0]),
			samples: {
				time: parts[0].imp.samples?.time ?? [],
				mv: Object.fromEntries(parts.map((p) => [p.slot, p.imp.samples?.mv[p.slot] ?? []]))
			}
		};
	}
	// A black level a hair below blanking is a valid reading (the engine's
	// RUBRIC.readings.belowBlankingToleranceIre); it is kept as read.
	// The engine grades three channels; a partial trace still previews (channels copied, said so).
	let report: LevelReport | null = null;
	let reportError: string | null = null;
	const copied = CH.some((c) => !merged.plateaus[c]);
	try {
		const input = traceToLevelInput(merged, { copyMissing: true, fullScaleMv });
		report = analyzeLevels(input);
	} catch (err) {
		if (!(err instanceof LevelInputError)) throw err;
		reportError = err.message;
	}
	return {
		names: uploads.map((u) => u.name),
		steps: merged.steps,
		noiseMv: merged.noiseMv,
		warnings: merged.warnings,
		channels: merged.channels,
		plateaus: merged.plateaus,
		samples: thin(merged.samples),
		report,
		reportError,
		copiedChannels: copied
	};
}

/** Read the traces and, once they parse, keep them (pending) so the saved run can link them. */
export async function readAndStoreTraces(
	db: Database,
	storage: Storage,
	actor: Actor,
	uploads: TraceUpload[],
	fullScaleMv = 700
): Promise<TracePreview> {
	const preview = readTraces(uploads, fullScaleMv);
	const fileIds: string[] = [];
	for (const u of uploads)
		fileIds.push(await storeTrace(db, storage, actor, u.name, new TextDecoder().decode(u.bytes)));
	return { ...preview, fileIds };
}

const RUN_FIELDS = [
	'revisionId',
	'status',
	'measuredBy',
	'measuredOn',
	'testSource',
	'pattern',
	'instrument',
	'termination',
	'fullScaleMv',
	'notes',
	'traceFileId',
	'band',
	'score'
] as const;

/**
 * Save a bench run. Curators' runs count at once (accepted) and regrade the revision;
 * members' runs wait for review (pending). `traceFileIds` are uploads from the preview:
 * the first is linked to the run, all become public once the run counts.
 */
export async function saveBenchRun(
	db: Database,
	actor: Actor,
	form: BenchRunForm,
	opts: { traceFileIds?: string[]; now?: Date } = {}
) {
	const now = opts.now ?? new Date();
	const readings = readingsFromForm(form);
	if (readings.length === 0) throw new LevelInputError('No readings yet: type them into the grid or read a trace.');
	const curator = hasRole(actor.role, 'curator');
	const traceIds = [...new Set([form.traceFileId, ...(opts.traceFileIds ?? [])].filter((x): x is string => !!x))];
	return db.transaction(async (tx) => {
		const [rev] = await tx
			.select({ id: t.revisions.id, converterId: t.revisions.converterId, retiredAt: t.revisions.retiredAt })
			.from(t.revisions)
			.where(eq(t.revisions.id, form.revisionId));
		if (!rev) throw new FieldError('revisionId', 'That revision does not exist.');
		for (const id of traceIds) await ownFile(tx, actor, id, 'trace');
		const status = curator ? 'accepted' : 'pending';
		const { id, report } = await recordBenchRun(tx, {
			revisionId: rev.id,
			status,
			measuredBy: form.measuredBy,
			submittedById: actor.id,
			measuredOn: form.measuredOn,
			testSource: form.testSource,
			pattern: form.pattern,
			instrument: form.instrument,
			termination: form.termination,
			fullScaleMv: form.fullScaleMv,
			notes: form.notes,
			traceFileId: traceIds[0] ?? null,
			readings
		});
		if (curator) {
			await tx.update(t.benchRuns).set({ reviewedById: actor.id, reviewedAt: now }).where(eq(t.benchRuns.id, id));
			await setFilesStatus(tx, traceIds, 'public');
			await regradeRevision(tx, rev.id, now);
			await tx.update(t.converters).set({ lastReviewedAt: now }).where(eq(t.converters.id, rev.converterId));
		} else {
			// a member's run is checked against the others while it waits for review
			await refreshRevisionChecks(tx, rev.id, now);
		}
		const [row] = await tx.select().from(t.benchRuns).where(eq(t.benchRuns.id, id));
		await audit(tx, {
			actorId: actor.id,
			action: curator ? 'created' : 'submitted',
			entity: 'bench_run',
			entityId: id,
			after: { ...pick(row), readings, traceFileIds: traceIds }
		});
		return { id, report, status };
	});
}

function pick(row: typeof t.benchRuns.$inferSelect) {
	return Object.fromEntries(RUN_FIELDS.map((k) => [k, row[k]]));
}

/** Mark a run superseded (never deleted): it stops counting and the revision is regraded. */
export async function supersedeBenchRun(
	db: Database,
	actor: Actor,
	input: { id: number; supersededById?: number; reason: string },
	now = new Date(),
	/** The revision whose page posted the form: a run of another revision is not found there. */
	revisionId?: number
) {
	return db.transaction(async (tx) => {
		const [before] = await tx.select().from(t.benchRuns).where(eq(t.benchRuns.id, input.id)).for('update');
		if (!before || (revisionId !== undefined && before.revisionId !== revisionId))
			throw new FieldError(null, 'That bench run does not exist.', 404);
		if (before.status === 'superseded') throw new FieldError(null, 'This run is already superseded.', 409);
		if (input.supersededById !== undefined) {
			if (input.supersededById === input.id) throw new FieldError('supersededById', 'A run cannot supersede itself.');
			const [by] = await tx
				.select({ revisionId: t.benchRuns.revisionId })
				.from(t.benchRuns)
				.where(eq(t.benchRuns.id, input.supersededById));
			if (!by || by.revisionId !== before.revisionId)
				throw new FieldError('supersededById', 'The newer run must be a run of the same revision.');
		}
		const [row] = await tx
			.update(t.benchRuns)
			.set({
				status: 'superseded',
				supersededById: input.supersededById ?? null,
				reviewNote: input.reason,
				reviewedById: actor.id,
				reviewedAt: now,
				updatedAt: now
			})
			.where(eq(t.benchRuns.id, input.id))
			.returning();
		await regradeRevision(tx, before.revisionId, now);
		await audit(tx, {
			actorId: actor.id,
			action: 'superseded',
			entity: 'bench_run',
			entityId: input.id,
			before: pick(before),
			after: { ...pick(row), supersededById: row.supersededById },
			reason: input.reason
		});
		return row;
	});
}

/** Accept or reject a run a member submitted. Only accepted runs count in the grade. */
export async function reviewBenchRun(
	db: Database,
	actor: Actor,
	input: { id: number; decision: 'accept' | 'reject'; reason: string },
	now = new Date()
) {
	return db.transaction(async (tx) => {
		const [before] = await tx.select().from(t.benchRuns).where(eq(t.benchRuns.id, input.id)).for('update');
		if (!before) throw new FieldError(null, 'That bench run does not exist.', 404);
		if (before.status !== 'pending') throw new FieldError(null, `This run was already ${before.status}.`, 409);
		const status = input.decision === 'accept' ? 'accepted' : 'rejected';
		const [row] = await tx
			.update(t.benchRuns)
			.set({ status, reviewNote: input.reason, reviewedById: actor.id, reviewedAt: now, updatedAt: now })
			.where(eq(t.benchRuns.id, input.id))
			.returning();
		await setFilesStatus(tx, [before.traceFileId], status === 'accepted' ? 'public' : 'rejected');
		if (status === 'accepted') {
			await regradeRevision(tx, before.revisionId, now);
			const [rev] = await tx
				.select({ converterId: t.revisions.converterId })
				.from(t.revisions)
				.where(eq(t.revisions.id, before.revisionId));
			await tx.update(t.converters).set({ lastReviewedAt: now }).where(eq(t.converters.id, rev.converterId));
		} else {
			await refreshRevisionChecks(tx, before.revisionId, now);
		}
		await audit(tx, {
			actorId: actor.id,
			action: status,
			entity: 'bench_run',
			entityId: input.id,
			before: pick(before),
			after: pick(row),
			reason: input.reason
		});
		return row;
	});
}

/** Runs of a revision, newest first, with their readings. */
export async function runsOfRevision(db: Database, revisionId: number) {
	const runs = await db
		.select({
			id: t.benchRuns.id,
			status: t.benchRuns.status,
			measuredBy: t.benchRuns.measuredBy,
			measuredOn: t.benchRuns.measuredOn,
			testSource: t.benchRuns.testSource,
			instrument: t.benchRuns.instrument,
			termination: t.benchRuns.termination,
			band: t.benchRuns.band,
			score: t.benchRuns.score,
			// what the band mark needs from the stored report
			worstDeviationIre: sql<number | null>`(${t.benchRuns.report}->>'worstDeviationIre')::float8`,
			failReasons: sql<string[] | null>`${t.benchRuns.report}->'failReasons'`,
			traceFileId: t.benchRuns.traceFileId,
			supersededById: t.benchRuns.supersededById,
			reviewNote: t.benchRuns.reviewNote,
			notes: t.benchRuns.notes,
			createdAt: t.benchRuns.createdAt
		})
		.from(t.benchRuns)
		.where(eq(t.benchRuns.revisionId, revisionId))
		.orderBy(desc(t.benchRuns.measuredOn), desc(t.benchRuns.id));
	const readings = runs.length
		? await db
				.select()
				.from(t.benchReadings)
				.where(
					inArray(
						t.benchReadings.benchRunId,
						runs.map((r) => r.id)
					)
				)
		: [];
	return runs.map((r) => ({
		...r,
		readings: readings
			.filter((x) => x.benchRunId === r.id)
			.sort((a, b) => a.ire - b.ire)
			.map((x) => ({ ire: x.ire, r: x.rMv, g: x.gMv, b: x.bMv }))
	}));
}

/** Pending member runs for the review queue, with the engine's report. */
export async function pendingRuns(db: Database) {
	return db
		.select({
			id: t.benchRuns.id,
			revisionId: t.benchRuns.revisionId,
			revision: t.revisions.code,
			converter: t.converters.model,
			brand: t.converters.brand,
			measuredBy: t.benchRuns.measuredBy,
			measuredOn: t.benchRuns.measuredOn,
			instrument: t.benchRuns.instrument,
			termination: t.benchRuns.termination,
			testSource: t.benchRuns.testSource,
			band: t.benchRuns.band,
			score: t.benchRuns.score,
			report: t.benchRuns.report,
			traceFileId: t.benchRuns.traceFileId,
			notes: t.benchRuns.notes,
			createdAt: t.benchRuns.createdAt
		})
		.from(t.benchRuns)
		.innerJoin(t.revisions, eq(t.revisions.id, t.benchRuns.revisionId))
		.innerJoin(t.converters, eq(t.converters.id, t.revisions.converterId))
		.where(and(eq(t.benchRuns.status, 'pending')))
		.orderBy(t.benchRuns.createdAt);
}
