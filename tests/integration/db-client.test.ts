/**
 * createDb: the queries Drizzle sends through the pool are named prepared statements, so
 * PostgreSQL parses and plans a repeated query once per connection (the extended query protocol's
 * named statements: PostgreSQL documentation, "Frontend/Backend Protocol", Extended Query; the
 * session's statements are listed in the pg_prepared_statements view). With `genericPlans` the
 * session plans a statement once and reuses the plan (plan_cache_mode = force_generic_plan;
 * PostgreSQL documentation, "Server Configuration", Query Planning; the view counts generic and
 * custom plans per statement).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { createDb } from '../../src/lib/server/db/client';
import { converters } from '../../src/lib/server/db/schema';
import { createEmptyDatabase } from './helpers/db';
import { applyMigrations } from '../../src/lib/server/db/migrate';

describe('createDb', () => {
	let client: ReturnType<typeof createDb>;
	let generic: ReturnType<typeof createDb>;

	beforeAll(async () => {
		const url = await createEmptyDatabase('sg_it_db_client');
		await applyMigrations(url);
		client = createDb(url, { max: 1 }); // one connection: the session whose statements we list
		generic = createDb(url, { max: 1, genericPlans: true });
	});
	afterAll(async () => {
		await client?.sql.end({ timeout: 5 });
		await generic?.sql.end({ timeout: 5 });
	});

	/** Plans made so far for the session's statement on the converter table. */
	async function plansOf(c: ReturnType<typeof createDb>) {
		for (const slug of ['one', 'two', 'three'])
			await c.db.select({ id: converters.id }).from(converters).where(eq(converters.slug, slug));
		const [row] = (await c.db.execute(
			sql`select generic_plans::int as generic, custom_plans::int as custom from pg_prepared_statements
				where statement like ${'%from "converter"%'}`
		)) as unknown as Array<{ generic: number; custom: number }>;
		return row;
	}

	it('plans each statement afresh by default, and once with genericPlans', async () => {
		// PostgreSQL's default (auto) makes a custom plan for at least the first five runs.
		expect(await plansOf(client)).toEqual({ generic: 0, custom: 3 });
		expect(await plansOf(generic)).toMatchObject({ custom: 0 });
		expect((await plansOf(generic)).generic).toBeGreaterThan(0);
	});

	it('prepares a repeated query once on its connection', async () => {
		for (const slug of ['one', 'two', 'three'])
			await client.db.select({ id: converters.id }).from(converters).where(eq(converters.slug, slug));
		const rows = (await client.db.execute(
			sql`select statement from pg_prepared_statements where statement like ${'%from "converter"%'}`
		)) as unknown as Array<{ statement: string }>;
		expect(rows).toHaveLength(1);
		expect(rows[0].statement).toContain('"converter"."slug" = $1');
	});

	it('still runs transactions, whose statements use the transaction handle', async () => {
		const n = await client.db.transaction(async (tx) => {
			const [row] = (await tx.execute(sql`select count(*)::int as n from converter`)) as unknown as Array<{
				n: number;
			}>;
			return row.n;
		});
		expect(n).toBe(0);
	});
});
