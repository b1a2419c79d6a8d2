import { defineConfig } from 'drizzle-kit';

// drizzle-kit does not read .env: pass DATABASE_URL in (the scripts do).
// `generate` needs no database, so a placeholder URL is fine there.
export default defineConfig({
	schema: './src/lib/server/db/schema.ts',
	out: './drizzle',
	dialect: 'postgresql',
	dbCredentials: { url: process.env.DATABASE_URL ?? 'postgres://unused@127.0.0.1:1/unused' },
	strict: true,
	verbose: true
});
