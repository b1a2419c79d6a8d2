/**
 * Shared database types for the alert modules. Free of `$lib` and `$env` imports: the jobs
 * process, scripts and tests load these modules under tsx.
 */
export type { Db } from '../db/client';

/** Rows from `db.execute(sql\`...\`)`: postgres-js returns an array-like result. */
export function rowsOf<T>(result: unknown): T[] {
	return Array.from(result as ArrayLike<T>);
}
