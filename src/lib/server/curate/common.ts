/**
 * Shared pieces of the curator workspace's server logic. These modules take the database
 * (and storage) as arguments and never import `$env` or SvelteKit, so integration tests
 * call them directly; routes stay thin: parse the form, call one function, answer.
 */
import type { Database } from '../db/client';
import type { Role } from '../../enums';

export type { Database };
/** A transaction handle: what `db.transaction` passes to its callback. */
export type Tx = Parameters<Parameters<Database['transaction']>[0]>[0];
/** Either the pool-level db or a transaction. */
export type DbOrTx = Database | Tx;

/** Who is acting: the signed-in user from locals. */
export interface Actor {
	id: string;
	role: Role;
}

/**
 * A problem with what someone submitted, meant to be shown to them. `field` names the
 * form field it belongs to (null for the form as a whole).
 */
export class FieldError extends Error {
	constructor(
		readonly field: string | null,
		message: string,
		readonly status: 400 | 403 | 404 | 409 | 413 | 415 | 429 = 400
	) {
		super(message);
		this.name = 'FieldError';
	}
}

/** Lower-case, hyphenated slug in the form the database check accepts. */
export function slugify(text: string): string {
	return text
		.normalize('NFKD')
		.replace(/[\u0300-\u036f]/g, '')
		.toLowerCase()
		.replace(/[^a-z0-9]+/g, '-')
		.replace(/^-+|-+$/g, '')
		.slice(0, 80)
		.replace(/-+$/g, '');
}

export const SLUG_RE = /^[a-z0-9]+(-[a-z0-9]+)*$/;

/** PostgreSQL unique violation (23505), optionally on a named constraint. */
export function isUniqueViolation(err: unknown, constraint?: string): boolean {
	const e = (err as { cause?: unknown })?.cause ?? err;
	const pg = e as { code?: string; constraint_name?: string; constraint?: string };
	if (pg?.code !== '23505') return false;
	return !constraint || pg.constraint_name === constraint || pg.constraint === constraint;
}

/** Pick only the listed keys (for audit before/after snapshots). */
export function pick<T extends object, K extends keyof T>(row: T, keys: readonly K[]): Pick<T, K> {
	const out = {} as Pick<T, K>;
	for (const k of keys) out[k] = row[k];
	return out;
}
