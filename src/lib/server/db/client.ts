/**
 * Drizzle client factory, free of `$env` so job scripts, the seed and tests share it.
 */
import { drizzle } from 'drizzle-orm/postgres-js';
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import postgres from 'postgres';
import * as schema from './schema';

export type Database = ReturnType<typeof createDb>['db'];

/** The pool-level client or a transaction on it: what server modules take, so they work inside a caller's transaction. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- any pool or transaction handle over this schema (Drizzle's third type argument)
export type Db = PgDatabase<PgQueryResultHKT, typeof schema, any>;

/** Open a pool and its Drizzle wrapper. Fails fast with a clear message when no URL is given. */
export function createDb(url: string | undefined, options: { max?: number } = {}) {
	if (!url) {
		throw new Error('DATABASE_URL is not set: start the product with `npm start`, or see .env.example');
	}
	const sql = postgres(url, { max: options.max ?? 10, onnotice: () => {} });
	const db = drizzle(sql, { schema });
	return { db, sql };
}
