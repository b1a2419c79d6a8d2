import { db } from '$lib/server/db';
import { loadRestocks } from '$lib/server/queries/public';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({ restocks: await loadRestocks(db, 60) });
