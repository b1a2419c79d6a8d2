/**
 * Upload quota per member and the housekeeping that removes pending uploads nobody attached
 * within a day (row and stored object).
 */
import { eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as t from '../../src/lib/server/db/schema';
import { removeUnattachedUploads, storeTrace, UPLOAD_QUOTA_FILES } from '../../src/lib/server/curate/uploads';
import { FieldError } from '../../src/lib/server/curate/common';
import { housekeeping } from '../../jobs/housekeeping';
import { curateWorld } from './helpers/curate-world';

let w: Awaited<ReturnType<typeof curateWorld>>;
beforeAll(async () => {
	w = await curateWorld('sg_it_upload_housekeeping');
});
afterAll(async () => w?.close());

const csv = (n: number) => `time,volts\n0,0\n${n},0.07\n`;

describe('uploads', () => {
	it('refuses a member past the pending-upload quota with a 413 on the field; curators are not limited', async () => {
		for (let i = 0; i < UPLOAD_QUOTA_FILES; i++) await storeTrace(w.db, w.storage, w.member, `t${i}.csv`, csv(i));
		const err = await storeTrace(w.db, w.storage, w.member, 'one-too-many.csv', csv(99)).catch((e) => e);
		expect(err).toBeInstanceOf(FieldError);
		expect(err).toMatchObject({ field: 'trace', status: 413 });
		expect(String(err.message)).toMatch(/waiting to be attached/);
		const mine = await w.db.select().from(t.files).where(eq(t.files.ownerId, w.member.id));
		expect(mine).toHaveLength(UPLOAD_QUOTA_FILES);
		await expect(storeTrace(w.db, w.storage, w.curator, 'bulk.csv', csv(1))).resolves.toBeTypeOf('string');
	});

	it('housekeeping removes pending uploads older than a day, with their objects, and keeps the rest', async () => {
		const now = new Date();
		const old = new Date(now.getTime() - 25 * 3600_000);
		const mine = await w.db.select().from(t.files).where(eq(t.files.ownerId, w.member.id));
		const staleIds = mine.slice(0, 10).map((f) => f.id);
		const publicOld = mine[10];
		await w.db
			.update(t.files)
			.set({ createdAt: old })
			.where(inArray(t.files.id, [...staleIds, publicOld.id]));
		await w.db.update(t.files).set({ status: 'public' }).where(eq(t.files.id, publicOld.id));
		const staleKey = mine[0].storageKey;
		expect(await w.storage.exists(staleKey)).toBe(true);

		const result = await housekeeping(w.db, now, w.storage);
		expect(result.unattachedUploads).toBe(10);
		const left = await w.db.select({ id: t.files.id }).from(t.files).where(eq(t.files.ownerId, w.member.id));
		expect(left).toHaveLength(UPLOAD_QUOTA_FILES - 10);
		expect(left.map((f) => f.id)).toContain(publicOld.id);
		expect(await w.storage.exists(staleKey)).toBe(false);
		// The member has room again.
		await expect(storeTrace(w.db, w.storage, w.member, 'again.csv', csv(7))).resolves.toBeTypeOf('string');
		expect(await removeUnattachedUploads(w.db, w.storage, now)).toBe(0);
	});
});
