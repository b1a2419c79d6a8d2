/**
 * Database helpers for integration tests: scratch databases created fresh from the
 * committed migrations on the test cluster that `npm test` starts.
 */
import postgres from 'postgres';
import { applyMigrations } from '../../../src/lib/server/db/migrate';
import { createDb } from '../../../src/lib/server/db/client';

function adminUrl() {
	const url = process.env.TEST_ADMIN_DATABASE_URL;
	if (!url) throw new Error('TEST_ADMIN_DATABASE_URL is not set: run the tests with `npm test`');
	return url;
}

/** URL of a database named `name` on the test cluster. */
export function urlFor(name: string) {
	const u = new URL(adminUrl());
	u.pathname = `/${name}`;
	return u.toString();
}

/** Create an empty database (dropping any old one of that name). */
export async function createEmptyDatabase(name: string) {
	if (!/^[a-z0-9_]+$/.test(name)) throw new Error(`bad database name ${name}`);
	const admin = postgres(adminUrl(), { max: 1, onnotice: () => {} });
	try {
		await admin.unsafe(`drop database if exists ${name} with (force)`);
		await admin.unsafe(`create database ${name}`);
	} finally {
		await admin.end();
	}
	return urlFor(name);
}

/** A fresh, migrated database with a Drizzle client; call `close()` when done. */
export async function freshDatabase(name: string) {
	const url = await createEmptyDatabase(name);
	await applyMigrations(url);
	const { db, sql } = createDb(url, { max: 4 });
	return { url, db, sql, close: () => sql.end({ timeout: 5 }) };
}
