/**
 * GET /api/v1/listings/:id/history?range=30d|90d|1y|all&points=N
 * A listing's price and stock change points (downsampled to at most N, default 300) with its 30- and
 * 90-day figures. Public: shop prices and stock are what the guide shows anyway.
 * Errors are RFC 9457 problem details.
 */
import { json } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { listingHistoryPath as params, listingHistoryQuery as query } from '$lib/server/api/contract';
import { listingHistory } from '$lib/server/queries/history';
import { invalidInput, problem } from '$lib/server/http/problem';
import { looseWholeNumbers } from '$lib/server/http/numbers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params: raw, url }) => {
	const p = params.safeParse(raw);
	if (!p.success) return invalidInput(p.error, 'listing id must be a positive integer');
	const loose = looseWholeNumbers(url.searchParams, ['points']);
	if (loose)
		return problem(400, 'invalid query parameters: points is a whole number from 10 to 1000', { errors: loose });
	const q = query.safeParse(Object.fromEntries(url.searchParams));
	if (!q.success)
		return invalidInput(q.error, 'invalid query parameters: range is one of 30d, 90d, 1y, all; points is 10-1000');
	const history = await listingHistory(db, p.data.id, q.data);
	if (!history) return problem(404, `listing ${p.data.id} not found`);
	return json(history, { headers: { 'Cache-Control': 'public, max-age=60' } });
};
