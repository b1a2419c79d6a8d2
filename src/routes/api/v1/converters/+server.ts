import { db } from '$lib/server/db';
import { loadApiCataloguePage } from '$lib/server/queries/read-model';
import { converterListQuery as params } from '$lib/server/api/contract';
import { searchObject, viewpoint } from '$lib/server/queries/public-params';
import { badRequest, cachedResponse, DATA_LICENCE, JSON_TYPE } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

/** Converters per response unless `limit` says otherwise (a catalogue of thousands is read page by page). */
const API_PAGE_SIZE = 100;

/** Live converters by name with their revisions, bands and the best offer in a region, a page at a time. */
export const GET: RequestHandler = async ({ url, request }) => {
	const parsed = params.safeParse(searchObject(url));
	if (!parsed.success) return badRequest(parsed.error);
	const view = viewpoint(parsed.data, null, request.headers.get('accept-language'));
	const found = await loadApiCataloguePage(
		db,
		view,
		{ sort: 'name' },
		{ page: parsed.data.page, pageSize: parsed.data.limit ?? API_PAGE_SIZE }
	);
	const link = (page: number) => {
		const u = new URLSearchParams({ region: view.region, currency: view.currency, page: String(page) });
		if (parsed.data.limit) u.set('limit', String(parsed.data.limit));
		return `/api/v1/converters?${u}`;
	};
	const head = JSON.stringify({
		region: view.region,
		currency: view.currency,
		licence: DATA_LICENCE.name,
		total: found.total,
		page: found.page,
		pages: found.pages,
		links: {
			next: found.page < found.pages ? link(found.page + 1) : null,
			prev: found.page > 1 ? link(found.page - 1) : null
		}
	});
	// the items arrive as JSON texts (loadApiCataloguePage): `converters` is spliced in as the last key
	return cachedResponse(request, `${head.slice(0, -1)},"converters":[${found.items.join(',')}]}`, JSON_TYPE);
};
