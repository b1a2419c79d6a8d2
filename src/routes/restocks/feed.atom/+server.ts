import { db } from '$lib/server/db';
import { loadRestocks } from '$lib/server/queries/public';
import { restocksAtom } from '$lib/server/queries/public-feed';
import { cachedResponse } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

/** Restocks as an Atom 1.0 feed (RFC 4287). */
export const GET: RequestHandler = async ({ url, request }) => {
	const xml = restocksAtom(await loadRestocks(db, 50), url.origin);
	return cachedResponse(request, xml, 'application/atom+xml; charset=utf-8');
};
