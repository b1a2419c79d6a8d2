/**
 * Strict number parsing at the boundary. `Number(' 5 ')` is 5, `parseInt('1.5')` is 1 and
 * `1e308` is a whole number to JavaScript; none of them is what a person meant by a count or
 * an id. Text must be plain decimal digits (an optional sign; a decimal point only where
 * fractions are allowed), and ids must fit PostgreSQL's `integer`.
 */
import { z } from 'zod';

/** Largest PostgreSQL `integer` (ids of serial columns). */
export const PG_INT_MAX = 2_147_483_647;

export const WHOLE_NUMBER_TEXT = /^[+-]?\d{1,15}$/;
export const DECIMAL_TEXT = /^[+-]?(?:\d{1,15}(?:\.\d{1,12})?|\.\d{1,12})$/;

/** Text (or a number) to a number when it is strictly whole; anything else is left for zod to refuse. */
function strictWhole(v: unknown): unknown {
	if (typeof v === 'string') return WHOLE_NUMBER_TEXT.test(v) ? Number(v) : v === '' ? undefined : v;
	return v;
}

/** A whole number given as JSON number or strict decimal text. */
export function wholeNumber(message = 'A whole number, like 5.') {
	return z.preprocess(strictWhole, z.number({ message }).int(message));
}

/** A database id: a positive whole number within PostgreSQL's integer range. */
export function dbId(message = 'An id is a positive whole number.') {
	return wholeNumber(message).pipe(z.number().positive(message).max(PG_INT_MAX, message));
}

/**
 * The raw text of a form field that a number schema will read: null when it is acceptable,
 * else the message to show. Used before superforms, whose own form parsing is lenient
 * (`parseInt`/`parseFloat`).
 */
export function strictNumberProblem(raw: string, integer: boolean): string | null {
	if (raw === '') return null;
	if (integer) return WHOLE_NUMBER_TEXT.test(raw) ? null : 'A whole number in plain digits, like 5.';
	return DECIMAL_TEXT.test(raw) ? null : 'A number in plain digits, like 12.5.';
}

/** Number fields of a zod object schema (unwrapping optional/default/nullable), with whether each is whole. */
export function numberFields(schema: unknown): Array<{ key: string; integer: boolean }> {
	const shape = (schema as { shape?: Record<string, unknown> }).shape;
	if (!shape) return [];
	const out: Array<{ key: string; integer: boolean }> = [];
	for (const [key, field] of Object.entries(shape)) {
		let s = field as { _zod: { def: { type: string; innerType?: unknown } }; format?: string | null };
		while (s._zod.def.innerType) s = s._zod.def.innerType as typeof s;
		if (s._zod.def.type === 'number') out.push({ key, integer: s.format === 'safeint' || s.format === 'int32' });
	}
	return out;
}

/** Query or path values meant as whole numbers that are not plain digits, as `{ name: message }`, or null. */
export function looseWholeNumbers(
	values: URLSearchParams | Record<string, string>,
	keys: string[]
): Record<string, string> | null {
	const get = (k: string) =>
		values instanceof URLSearchParams ? values.getAll(k) : values[k] !== undefined ? [values[k]] : [];
	const errors: Record<string, string> = {};
	for (const key of keys)
		for (const raw of get(key))
			if (raw !== '' && !WHOLE_NUMBER_TEXT.test(raw)) errors[key] = `${key} is a whole number in plain digits.`;
	return Object.keys(errors).length ? errors : null;
}
