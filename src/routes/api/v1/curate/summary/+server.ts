import { json } from '@sveltejs/kit';
import { requireApiRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { curatorSummary } from '$lib/server/queries/review';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireApiRole(event, 'curator');
	return json(await curatorSummary(db), { headers: { 'Cache-Control': 'private, no-store' } });
};
