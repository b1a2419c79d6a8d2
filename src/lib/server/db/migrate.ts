/** Apply the committed drizzle/ migrations to a database (used by scripts and tests). */
import { drizzle } from 'drizzle-orm/postgres-js';
import { migrate } from 'drizzle-orm/postgres-js/migrator';
import postgres from 'postgres';
import { fileURLToPath } from 'node:url';

export const MIGRATIONS_FOLDER = fileURLToPath(new URL('../../../../drizzle', import.meta.url));

/** Bring the database at `url` up to the newest committed migration (a no-op when current). */
export async function applyMigrations(url: string | undefined): Promise<void> {
	if (!url) throw new Error('DATABASE_URL is not set: cannot apply migrations');
	const sql = postgres(url, { max: 1, onnotice: () => {} });
	try {
		await migrate(drizzle(sql), { migrationsFolder: MIGRATIONS_FOLDER });
	} finally {
		await sql.end();
	}
}
