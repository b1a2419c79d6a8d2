/**
 * Form-action glue shared by the workspace routes: validate with superforms + zod, call a
 * domain function, and turn its FieldError / LevelInputError into a 400 with the message
 * on the right field, keeping everything that was typed. Free of `$app`/`$env`, so the
 * integration tests run whole actions without the HTTP layer.
 */
import { error, fail, type ActionFailure } from '@sveltejs/kit';
import { setError, superValidate, type SuperValidated } from 'sveltekit-superforms/server';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { z } from 'zod';
import { LevelInputError } from '../../levels/index';
import { BodyError, readForm } from '../http/body';
import { numberFields, PG_INT_MAX, strictNumberProblem } from '../http/numbers';
import { FieldError } from './common';

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- superforms' zod adapter generics cannot be spelled for any schema
type AnyForm = SuperValidated<any, any, any>;
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- superforms' zod adapter generics cannot be spelled for any schema
type AnySchema = z.ZodObject<any> | z.ZodType<any, any>;
/** The validated form of a schema (superforms' message and input types left open). */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- superforms' zod adapter generics cannot be spelled for any schema
type FormOf<S extends AnySchema> = SuperValidated<z.infer<S>, any, any>;

/**
 * Validate posted form data against a schema (superforms, zod 4 adapter). A body that is not
 * form data is a 400. Number fields are checked strictly first: superforms reads them with
 * parseInt/parseFloat, which would take "1.5" as 1 and " 5 " as 5.
 */
export async function validate<S extends AnySchema>(data: FormData | URLSearchParams | Request, schema: S) {
	let fields: FormData | URLSearchParams;
	try {
		fields = data instanceof Request ? await readForm(data) : data;
	} catch (err) {
		if (err instanceof BodyError) error(400, err.message);
		throw err;
	}
	// eslint-disable-next-line @typescript-eslint/no-explicit-any -- superforms' zod adapter generics cannot be spelled for any schema
	const form = (await superValidate(fields as FormData, zod4(schema as any))) as FormOf<S>;
	for (const { key, integer } of numberFields(schema)) {
		for (const raw of fields.getAll(key)) {
			const problem = typeof raw === 'string' ? strictNumberProblem(raw, integer) : 'Expected a number, not a file.';
			if (problem) {
				form.valid = false;
				(form.errors as Record<string, string[]>)[key] = [problem];
				break;
			}
		}
	}
	return form;
}

/** An empty form for a load function, optionally pre-filled. */
export async function emptyForm<S extends AnySchema>(schema: S, initial?: Partial<z.infer<S>>, id?: string) {
	// eslint-disable-next-line @typescript-eslint/no-explicit-any -- superforms' zod adapter generics cannot be spelled for any schema
	return superValidate(initial as any, zod4(schema as any), { errors: false, id }) as Promise<FormOf<S>>;
}

/**
 * Run `work`; a FieldError or LevelInputError becomes fail(status) with the message on
 * its field (or as the form's message), and the posted values stay in the form.
 */
export async function attempt<F extends AnyForm, R>(
	form: F,
	work: () => Promise<R>,
	extra: Record<string, unknown> = {}
): Promise<{ ok: true; value: R } | { ok: false; failure: ActionFailure<Record<string, unknown> & { form: F }> }> {
	try {
		return { ok: true, value: await work() };
	} catch (err) {
		if (err instanceof FieldError) {
			const failure =
				err.field && err.field in (form.data as object)
					? (setError(form, err.field as never, err.message, { status: err.status }) as unknown as ActionFailure<{
							form: F;
						}>)
					: fail(err.status, { form: withMessage(form, err.message), ...extra });
			if (extra && Object.keys(extra).length) Object.assign(failure.data, extra);
			return { ok: false, failure: failure as ActionFailure<Record<string, unknown> & { form: F }> };
		}
		if (err instanceof LevelInputError) {
			return { ok: false, failure: fail(400, { form: withMessage(form, err.message, err.issues), ...extra }) };
		}
		throw err;
	}
}

/**
 * Run `work` for an action that has no form to put a message on (retire, restore, poll now,
 * remove a pick): a FieldError becomes an HTTP error with its status (404 for a missing row),
 * never a 500.
 */
export async function orHttpError<R>(work: () => Promise<R>): Promise<R> {
	try {
		return await work();
	} catch (err) {
		if (err instanceof FieldError) error(err.status as Parameters<typeof error>[0], err.message);
		throw err;
	}
}

/** Put a form-level error message on the form (shown above the fields). */
export function withMessage<F extends AnyForm>(form: F, message: string, issues: string[] = []): F {
	form.valid = false;
	form.message = { type: 'error', text: message, issues: issues.length > 1 ? issues : [] };
	return form;
}

/** Say the change was made, on the form that asked for it (a status line above its fields). */
export function done<F extends AnyForm>(form: F, text: string): F {
	form.message = { type: 'ok', text };
	return form;
}

/** Form-level problems (zod issues at the root) as one message. */
export function invalid<F extends AnyForm>(form: F, extra: Record<string, unknown> = {}) {
	return fail(400, { form, ...extra });
}

/** A File from a form field, as bytes (null when the field is empty). */
export async function fileFrom(data: FormData, field: string): Promise<{ name: string; bytes: Uint8Array } | null> {
	const v = data.get(field);
	if (!v || typeof v === 'string' || v.size === 0) return null;
	return { name: v.name || field, bytes: new Uint8Array(await v.arrayBuffer()) };
}

/** A numeric route id, or 404 (before any query runs). */
export function idParam(raw: string | undefined): number {
	const n = Number(raw);
	if (!raw || !/^[1-9]\d{0,9}$/.test(raw) || n > PG_INT_MAX) error(404, 'Not found.');
	return n;
}
