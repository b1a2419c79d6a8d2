import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { countRows, seedDemo } from '../../src/lib/server/db/seed';
import { converters, revisions, users } from '../../src/lib/server/db/schema';
import { CONVERTERS, DEMO_PEOPLE } from '../../src/lib/demo/scenario';
import { freshDatabase } from './helpers/db';

describe('demo seed', () => {
	let h: Awaited<ReturnType<typeof freshDatabase>>;
	const now = new Date('2026-11-30T12:00:00Z');

	beforeAll(async () => {
		h = await freshDatabase('sg_it_seed');
	});
	afterAll(async () => h?.close());

	it('loads the invented scenario with graded revisions', async () => {
		const added = await seedDemo(h.db, { shopsPort: 4410, now });
		expect(added.converters).toBe(CONVERTERS.length);
		const revs = await h.db.select().from(revisions);
		expect(revs.length).toBe(CONVERTERS.reduce((n, c) => n + c.revisions.length, 0));
		for (const r of revs) {
			expect(r.band, `revision ${r.id} graded`).not.toBeNull();
			expect(r.runCount).toBeGreaterThan(0);
		}
		const [curator] = await h.db.select().from(users).where(eq(users.email, DEMO_PEOPLE.curator.email));
		expect(curator.role).toBe('curator');
	});

	it('is idempotent and keeps what users changed', async () => {
		// A user edits a seeded converter and adds one of their own.
		await h.db.update(converters).set({ summary: 'edited by a curator' }).where(eq(converters.slug, CONVERTERS[0].slug));
		await h.db.insert(converters).values({ slug: 'user-added-box', brand: 'Someone', model: 'Box' });
		await h.db.update(users).set({ role: 'member' }).where(eq(users.email, DEMO_PEOPLE.admin.email));
		const before = await countRows(h.db);

		const added = await seedDemo(h.db, { shopsPort: 4410, now: new Date(now.getTime() + 86_400_000) });

		expect(Object.values(added).every((n) => n === 0), JSON.stringify(added)).toBe(true);
		expect(await countRows(h.db)).toEqual(before);
		const [edited] = await h.db.select().from(converters).where(eq(converters.slug, CONVERTERS[0].slug));
		expect(edited.summary).toBe('edited by a curator');
		const [mine] = await h.db.select().from(converters).where(eq(converters.slug, 'user-added-box'));
		expect(mine).toBeDefined();
		const [admin] = await h.db.select().from(users).where(eq(users.email, DEMO_PEOPLE.admin.email));
		expect(admin.role, 'a role changed by an admin is not reset').toBe('member');
	});
});
