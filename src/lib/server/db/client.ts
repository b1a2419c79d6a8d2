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

/**
 * Open a pool and its Drizzle wrapper. Fails fast with a clear message when no URL is given.
 *
 * `genericPlans`: the pool's sessions plan each prepared statement once and reuse the plan
 * (`plan_cache_mode = force_generic_plan`). Left to itself PostgreSQL kept planning the public
 * pages' statements again on every run, as their parameters (id lists, page offsets) make a generic
 * plan's estimate look worse: planning was over half of the database's time on a converter page
 * (measured under load: 4.7 -> 3.1 ms per converter page, catalogue 2.9 -> 1.5, API 2.6 -> 1.6).
 * Those statements select by indexed keys, where a generic plan takes the same path; the history,
 * finder, restocks and compare routes timed no slower with it. Jobs keep PostgreSQL's default.
 */
export function createDb(url: string | undefined, options: { max?: number; genericPlans?: boolean } = {}) {
	if (!url) {
		throw new Error('DATABASE_URL is not set: start the product with `npm start`, or see .env.example');
	}
	const sql = postgres(url, {
		max: options.max ?? 10,
		onnotice: () => {},
		...(options.genericPlans ? { connection: { plan_cache_mode: 'force_generic_plan' } } : {})
	});
	const db = drizzle(preparedByDefault(sql), { schema });
	return { db, sql };
}

/**
 * Drizzle asks postgres.js to prepare only the queries it is given a name for (`.prepare(name)`);
 * every other statement went to PostgreSQL unnamed, so it was parsed and planned again on every
 * run: on a converter page that was 9 of the database's 11 ms. postgres.js keeps one named
 * statement per query text on each connection, so every query Drizzle sends through the pool is
 * prepared once per connection. (Statements inside a transaction run on the transaction's own
 * handle and stay unnamed, except queries built with `.prepare(name)`, as `preparedFor` builds.)
 */
function preparedByDefault(sql: postgres.Sql): postgres.Sql {
	return new Proxy(sql, {
		get(target, prop, receiver) {
			if (prop === 'unsafe')
				return (query: string, params?: postgres.ParameterOrJSON<never>[], options?: postgres.UnsafeQueryOptions) =>
					target.unsafe(query, params, { ...options, prepare: true });
			return Reflect.get(target, prop, receiver);
		}
	});
}
