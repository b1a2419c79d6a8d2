/** The app's one database client (SvelteKit side). Jobs and scripts use createDb directly. */
import { env } from '$env/dynamic/private';
import { building } from '$app/environment';
import { createDb } from './client';

const url = building ? 'postgres://build@127.0.0.1:1/build' : env.DATABASE_URL;
export const { db, sql } = createDb(url);
export * as tables from './schema';
