import { db } from '$lib/server/db';
import { listGuides } from '$lib/server/queries/public';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({ guides: await listGuides(db) });
