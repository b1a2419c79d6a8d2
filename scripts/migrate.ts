import { applyMigrations } from '../src/lib/server/db/migrate';

await applyMigrations(process.env.DATABASE_URL);
console.log('migrations applied');
