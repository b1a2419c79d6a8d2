/** The app's one database client (SvelteKit side). Jobs and scripts use createDb directly. */
import { env } from '$env/dynamic/private';
import { building } from '$app/environment';
import { createDb } from './client';

const url = building ? 'postgres://build@127.0.0.1:1/build' : env.DATABASE_URL;
// DATABASE_POOL_MAX: connections per app instance (README, "Running on several machines").
// Generic plans: the pages' statements are planned once per connection (createDb).
export const { db, sql } = createDb(url, { max: Number(env.DATABASE_POOL_MAX || 10), genericPlans: true });
export * as tables from './schema';
