/** Shared set-up for the curator workspace's integration tests: a fresh database, people, a fake S3. */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startFakeS3 } from '../../../fixtures/s3/server';
import { createStorage } from '../../../src/lib/server/storage/index';
import * as t from '../../../src/lib/server/db/schema';
import type { Actor } from '../../../src/lib/server/curate/common';
import { freshDatabase } from './db';

export async function curateWorld(name: string) {
	const dbh = await freshDatabase(name);
	const dir = mkdtempSync(join(tmpdir(), 'sg-s3-'));
	const s3 = await startFakeS3({ port: 0, directory: dir });
	const storage = createStorage({
		endpoint: s3.endpoint,
		bucket: s3.bucket,
		region: 'us-east-1',
		accessKeyId: 'S3RVER',
		secretAccessKey: 'S3RVER'
	});
	const people = await dbh.db
		.insert(t.users)
		.values([
			{ email: 'cur@example.test', name: 'Test Curator', role: 'curator' },
			{ email: 'adm@example.test', name: 'Test Admin', role: 'admin' },
			{ email: 'mem@example.test', name: 'Test Member', role: 'member' },
			{ email: 'other@example.test', name: 'Other Member', role: 'member' }
		])
		.returning();
	const [cur, adm, mem, other] = people.map((p) => ({ id: p.id, role: p.role }) as Actor);
	return {
		...dbh,
		storage,
		curator: cur,
		admin: adm,
		member: mem,
		other,
		async close() {
			await dbh.close();
			await s3.close();
			rmSync(dir, { recursive: true, force: true });
		}
	};
}

/** Audit rows for one entity, oldest first. */
export async function auditRows(db: Awaited<ReturnType<typeof curateWorld>>['db'], entity: string) {
	const rows = await db.select().from(t.auditLog);
	return rows.filter((r) => r.entity === entity).sort((a, b) => a.id - b.id);
}
