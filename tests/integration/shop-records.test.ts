/**
 * Stored shop record lines (src/lib/server/queries/shops.ts): `refreshShopRecords` stores the line
 * `shopRecords` works out for each shop, listing rows (`listingNotes`) read it from there, a second
 * run with nothing new changes nothing, and a changed line is announced on sg_public so page caches
 * drop what they hold. The line's own rules are tested in tests/unit/restock.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import postgres from 'postgres';
import { seedDemo } from '../../src/lib/server/db/seed';
import { listings, shopRecordRows, shops } from '../../src/lib/server/db/schema';
import { listingNotes, refreshShopRecords, shopRecords } from '../../src/lib/server/queries/shops';
import { freshDatabase } from './helpers/db';

describe('stored shop record lines', () => {
	let h: Awaited<ReturnType<typeof freshDatabase>>;
	const now = new Date('2026-11-30T12:00:00Z');

	beforeAll(async () => {
		h = await freshDatabase('sg_it_shop_records');
		await seedDemo(h.db, { shopsPort: 4410, now });
	}, 120_000);
	afterAll(async () => h?.close());

	it('the seed stores for every shop the line shopRecords works out, and listing rows show it', async () => {
		const live = await shopRecords(h.db, { now });
		const stored = await h.db.select().from(shopRecordRows);
		expect(stored).toHaveLength((await h.db.select().from(shops)).length);
		expect(
			stored.some((s) => s.line),
			'some demo shop has a record line'
		).toBe(true);
		for (const s of stored) expect(s.line, `shop ${s.shopId}`).toBe(live.get(s.shopId)?.line ?? null);

		const rows = await h.db.select({ id: listings.id, shopId: listings.shopId }).from(listings);
		const notes = await listingNotes(
			h.db,
			rows.map((r) => r.id),
			now
		);
		for (const r of rows) expect(notes.get(r.id)?.shop.line).toBe(live.get(r.shopId)?.line ?? null);
	});

	it('a second run changes nothing; a changed line is stored and announced on sg_public', async () => {
		expect(await refreshShopRecords(h.db, now)).toEqual({ shops: expect.any(Number), changed: 0 });

		const [shop] = await h.db.select().from(shopRecordRows).limit(1);
		await h.db.update(shopRecordRows).set({ line: 'an old line' }).where(eq(shopRecordRows.shopId, shop.shopId));
		const listener = postgres(h.url, { max: 1, onnotice: () => {} });
		const heard: string[] = [];
		try {
			await listener.listen('sg_public', (payload) => heard.push(payload));
			expect((await refreshShopRecords(h.db, now)).changed).toBe(1);
			await expect.poll(() => heard).toContain('shop_record');
		} finally {
			await listener.end();
		}
		const [after] = await h.db.select().from(shopRecordRows).where(eq(shopRecordRows.shopId, shop.shopId));
		expect(after.line).toBe(shop.line);
	});
});
