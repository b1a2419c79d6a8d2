import { db } from '$lib/server/db';
import { listConverters } from '$lib/server/queries/catalogue';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({ converters: await listConverters(db) });
