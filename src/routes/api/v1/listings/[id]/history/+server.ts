/**
 * GET /api/v1/listings/:id/history?range=30d|90d|1y|all&points=N
 * A listing's price and stock change points (downsampled to at most N, default 300) with its 30- and
 * 90-day figures. Public: shop prices and stock are what the guide shows anyway.
 */
import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { db } from '$lib/server/db';
import { listingHistoryPath as params, listingHistoryQuery as query } from '$lib/server/api/contract';
import { listingHistory } from '$lib/server/queries/history';
import type { RequestHandler } from './$types';


const issues = (err: z.ZodError) => err.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));

export const GET: RequestHandler = async ({ params: raw, url }) => {
	const p = params.safeParse(raw);
	if (!p.success) return json({ error: 'listing id must be a positive integer', issues: issues(p.error) }, { status: 400 });
	const q = query.safeParse(Object.fromEntries(url.searchParams));
	if (!q.success) return json({ error: 'invalid query parameters: range is one of 30d, 90d, 1y, all; points is 10-1000', issues: issues(q.error) }, { status: 400 });
	const history = await listingHistory(db, p.data.id, q.data);
	if (!history) return json({ error: `listing ${p.data.id} not found`, issues: [] }, { status: 404 });
	return json(history, { headers: { 'Cache-Control': 'public, max-age=60' } });
};
