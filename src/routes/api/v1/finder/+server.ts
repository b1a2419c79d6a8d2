import { db } from '$lib/server/db';
import { loadFinder } from '$lib/server/queries/read-model';
import { finderParams, searchObject, toFinderInput, viewpoint } from '$lib/server/queries/public-params';
import { badRequest, cachedJson, DATA_LICENCE } from '$lib/server/queries/public-http';
import { finderItem } from '$lib/finder';
import type { RequestHandler } from './$types';

/** Ranked converters for a region, budget and needs; explained in words. */
export const GET: RequestHandler = async ({ url, request }) => {
	const parsed = finderParams.safeParse(searchObject(url));
	if (!parsed.success) return badRequest(parsed.error);
	// The API never sets cookies: region comes from the query or Accept-Language.
	const view = viewpoint(parsed.data, null, request.headers.get('accept-language'));
	const input = toFinderInput(parsed.data, view);
	const results = (await loadFinder(db, view, input)).map(finderItem);
	return cachedJson(request, {
		region: view.region,
		currency: view.currency,
		input,
		results,
		licence: DATA_LICENCE.name
	});
};
