/**
 * The bench-run form's two actions, as plain functions of (db, storage, actor, form data):
 * "read trace" (parse the uploaded CSV, fill the grid, preview the report; the file is
 * kept pending) and "save" (validate, store through the engine, regrade). Routes for
 * curators (/curate/revisions/[id]/runs/new) and members (/teardowns/bench-run) share them.
 */
import type { Storage } from '../storage/index';
import { readAndStoreTraces, formFromReadings, saveBenchRun, type TraceUpload } from './bench';
import { FieldError, type Actor, type Database } from './common';
import { attempt, fileFrom, validate } from './forms';
import { benchRunSchema } from './schemas';
import { fail } from '@sveltejs/kit';

const SLOTS = [
	['trace', 'all'],
	['trace_r', 'r'],
	['trace_g', 'g'],
	['trace_b', 'b']
] as const;

/** Parse the trace upload(s) in the posted form and return the form with the grid filled in. */
export async function readTraceAction(db: Database, storage: Storage, actor: Actor, data: FormData) {
	const form = await validate(data, benchRunSchema);
	// Only the trace matters here: the rest of the form may still be half-filled.
	form.errors = {};
	form.valid = true;
	const uploads: TraceUpload[] = [];
	for (const [field, slot] of SLOTS) {
		const f = await fileFrom(data, field);
		if (f) uploads.push({ slot, ...f });
	}
	const fullScale = Number.isFinite(form.data.fullScaleMv) ? form.data.fullScaleMv : 700;
	const res = await attempt(form, () => readAndStoreTraces(db, storage, actor, uploads, fullScale));
	if (!res.ok) {
		const msg = (res.failure.data.form.message as { text?: string } | undefined)?.text;
		const fieldErr = Object.values(res.failure.data.form.errors ?? {}).flat()[0];
		return fail(res.failure.status, {
			form: res.failure.data.form,
			traceError: msg ?? fieldErr ?? 'The trace could not be read.'
		});
	}
	const preview = res.value;
	Object.assign(form.data, formFromReadings(preview.steps), { traceFileId: preview.fileIds[0] ?? '' });
	return { form, preview, traceFileIds: preview.fileIds };
}

/** Save the run. Returns the new run id, or a 400 with field errors and every value kept. */
export async function saveRunAction(db: Database, actor: Actor, data: FormData, revisionId?: number) {
	if (revisionId !== undefined) data.set('revisionId', String(revisionId));
	const form = await validate(data, benchRunSchema);
	if (!form.valid) return { ok: false as const, failure: fail(400, { form }) };
	const extraIds = data
		.getAll('traceFileIds')
		.filter((x): x is string => typeof x === 'string' && /^[0-9a-f-]{36}$/.test(x));
	const res = await attempt(form, () => saveBenchRun(db, actor, form.data, { traceFileIds: extraIds }));
	if (!res.ok) return { ok: false as const, failure: res.failure };
	return { ok: true as const, id: res.value.id, status: res.value.status, form };
}

export { FieldError };
