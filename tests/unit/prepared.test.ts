/** Queries built once per database handle (src/lib/server/db/prepared.ts). */
import { describe, expect, it, vi } from 'vitest';
import { PgDialect } from 'drizzle-orm/pg-core';
import { idArray, inIdList, preparedFor } from '../../src/lib/server/db/prepared';
import { listings } from '../../src/lib/server/db/schema';

describe('preparedFor', () => {
	it('builds a query the first time a handle asks for it, then hands back the same one', () => {
		const pool = {};
		const build = vi.fn(() => ({ built: true }));
		const first = preparedFor(pool, 'q', build);
		expect(preparedFor(pool, 'q', build)).toBe(first);
		expect(build).toHaveBeenCalledTimes(1);
	});
	it('keeps each handle (the pool, a transaction) and each name apart', () => {
		const pool = {};
		const tx = {};
		const a = preparedFor(pool, 'q', () => ({ on: 'pool' }));
		const b = preparedFor(tx, 'q', () => ({ on: 'tx' }));
		const c = preparedFor(pool, 'other', () => ({ on: 'other' }));
		expect([a, b, c].map((q) => q.on)).toEqual(['pool', 'tx', 'other']);
	});
});

describe('id lists as one placeholder', () => {
	it('writes PostgreSQL array text of whole numbers (the literal syntax of PostgreSQL 15 docs, 8.15.2)', () => {
		expect(idArray([3, 1, 2])).toBe('{3,1,2}');
		expect(idArray([])).toBe('{}');
		expect(idArray([4.9, -2.2])).toBe('{4,-2}');
	});
	it('compares the column with any element of the list, as an int array', () => {
		const { sql, params } = new PgDialect().sqlToQuery(inIdList(listings.id, 'ids'));
		expect(sql).toBe('"listing"."id" = any($1::int[])');
		expect(params).toHaveLength(1);
	});
});
