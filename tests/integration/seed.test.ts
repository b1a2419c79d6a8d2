import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { countRows, seedDemo } from '../../src/lib/server/db/seed';
import { benchRuns, converters, guides, revisions, teardownReports, users } from '../../src/lib/server/db/schema';
import {
	CONVERTERS,
	DEMO_GUIDE,
	DEMO_PEOPLE,
	LISTINGS,
	TEARDOWNS,
	TESTERS,
	TESTER_REVISIONS
} from '../../src/lib/demo/scenario';
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
			if (r.runCount === 0) {
				expect(r.band, `revision ${r.id} without runs is not graded`).toBeNull();
				continue;
			}
			expect(r.band, `revision ${r.id} graded`).not.toBeNull();
			expect(r.deviationIre, `revision ${r.id} carries its worst deviation for the band mark`).toEqual(
				expect.any(Number)
			);
		}
		expect(revs.filter((r) => r.runCount === 0)).toHaveLength(
			CONVERTERS.flatMap((c) => c.revisions).filter((r) => r.runs === 0).length
		);
		const [curator] = await h.db.select().from(users).where(eq(users.email, DEMO_PEOPLE.curator.email));
		expect(curator.role).toBe('curator');
	}, 180_000); // the whole scenario in one transaction: slow on a busy machine

	it("has the demo's story: teardowns with photos rows, testers, a review queue, a guide, a watch and an audit trail", async () => {
		const count = await countRows(h.db);
		expect(CONVERTERS.length).toBeGreaterThanOrEqual(14);
		expect(new Set(CONVERTERS.flatMap((c) => c.revisions.map((r) => r.chip))).size).toBe(5);
		expect(count.teardown_reports).toBe(TEARDOWNS.length + 1);
		const verified = await h.db.select().from(teardownReports).where(eq(teardownReports.status, 'verified'));
		expect(verified).toHaveLength(TEARDOWNS.length);
		const pendingRuns = await h.db.select().from(benchRuns).where(eq(benchRuns.status, 'pending'));
		expect(pendingRuns).toHaveLength(1);
		// each tester measured the same revisions
		for (const tester of TESTERS) {
			const runs = await h.db.select().from(benchRuns).where(eq(benchRuns.measuredBy, tester.name));
			expect(runs, tester.name).toHaveLength(TESTER_REVISIONS.length);
		}
		const [guide] = await h.db.select().from(guides).where(eq(guides.slug, DEMO_GUIDE.slug));
		expect(guide.status).toBe('published');
		expect(count.watches).toBe(1);
		expect(count.alert_outbox).toBe(1);
		expect(count.audit_log).toBeGreaterThanOrEqual(TEARDOWNS.length * 2 + 1);
		// several listings have at least three finished sold-out spells
		const spells = await h.db.execute<{ listing_id: number; restocks: number }>(sql`
			select listing_id, count(*)::int as restocks from stock_event where kind = 'restock' group by listing_id having count(*) >= 3`);
		expect([...spells].length).toBeGreaterThanOrEqual(LISTINGS.filter((l) => (l.spells ?? 0) >= 3).length);
	});

	it('is idempotent and keeps what users changed', async () => {
		// A user edits a seeded converter and adds one of their own.
		await h.db
			.update(converters)
			.set({ summary: 'edited by a curator' })
			.where(eq(converters.slug, CONVERTERS[0].slug));
		await h.db.insert(converters).values({ slug: 'user-added-box', brand: 'Someone', model: 'Box' });
		await h.db.update(users).set({ role: 'member' }).where(eq(users.email, DEMO_PEOPLE.admin.email));
		const before = await countRows(h.db);

		const added = await seedDemo(h.db, { shopsPort: 4410, now: new Date(now.getTime() + 86_400_000) });

		expect(
			Object.values(added).every((n) => n === 0),
			JSON.stringify(added)
		).toBe(true);
		expect(await countRows(h.db)).toEqual(before);
		const [edited] = await h.db.select().from(converters).where(eq(converters.slug, CONVERTERS[0].slug));
		expect(edited.summary).toBe('edited by a curator');
		const [mine] = await h.db.select().from(converters).where(eq(converters.slug, 'user-added-box'));
		expect(mine).toBeDefined();
		const [admin] = await h.db.select().from(users).where(eq(users.email, DEMO_PEOPLE.admin.email));
		expect(admin.role, 'a role changed by an admin is not reset').toBe('member');
	}, 180_000);
});
