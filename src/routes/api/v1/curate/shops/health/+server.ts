/**
 * GET /api/v1/curate/shops/health?days=7 (curators): per shop, poll outcomes counted over the last
 * `days` days, the last error, a Retry-After pause, and the listings failing now.
 */
import { json } from '@sveltejs/kit';
import { shopHealthQuery as query } from '$lib/server/api/contract';
import { requireApiRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { invalidInput, problem } from '$lib/server/http/problem';
import { looseWholeNumbers } from '$lib/server/http/numbers';
import { shopHealth } from '$lib/server/queries/shops';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireApiRole(event, 'curator');
	const loose = looseWholeNumbers(event.url.searchParams, ['days']);
	if (loose) return problem(400, 'invalid query parameters: days is 1-90', { errors: loose });
	const q = query.safeParse(Object.fromEntries(event.url.searchParams));
	if (!q.success) return invalidInput(q.error, 'invalid query parameters: days is 1-90');
	return json(await shopHealth(db, { days: q.data.days }), { headers: { 'Cache-Control': 'private, no-store' } });
};
