/**
 * Queries built once: Drizzle turns a query builder into SQL text on every run, which on a
 * converter page (a dozen statements) was about a tenth of the server's time and a fifth of what
 * it allocated. A query made here is built on first use and then run with new values for its
 * placeholders (`sql.placeholder`), once per database handle (the pool, or one transaction).
 */
import { sql, type SQL, type Column } from 'drizzle-orm';

const built = new WeakMap<object, Map<string, unknown>>();

/** The query `name` for this handle, built by `build` the first time it is asked for. */
export function preparedFor<Q>(db: object, name: string, build: () => Q): Q {
	let queries = built.get(db);
	if (!queries) built.set(db, (queries = new Map()));
	let q = queries.get(name) as Q | undefined;
	if (q === undefined) queries.set(name, (q = build()));
	return q;
}

/** `column = any(<placeholder>)`: an id list as one placeholder, whatever its length (pass idArray's text). */
export const inIdList = (column: Column | SQL, placeholder: string): SQL =>
	sql`${column} = any(${sql.placeholder(placeholder)}::int[])`;

/** An id list as PostgreSQL array text, for inIdList's placeholder. */
export const idArray = (ids: readonly number[]): string => `{${ids.map((id) => Math.trunc(id)).join(',')}}`;
