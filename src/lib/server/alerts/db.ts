/**
 * Shared database types for the alert modules. Free of `$lib` and `$env` imports: the jobs
 * process, scripts and tests load these modules under tsx.
 */
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import type * as t from '../db/schema';

/** The pool-level Drizzle database or a transaction on it. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- any pool or transaction handle over this schema (Drizzle's third type argument)
export type Db = PgDatabase<PgQueryResultHKT, typeof t, any>;

/** Rows from `db.execute(sql\`...\`)`: postgres-js returns an array-like result. */
export function rowsOf<T>(result: unknown): T[] {
	return Array.from(result as ArrayLike<T>);
}
