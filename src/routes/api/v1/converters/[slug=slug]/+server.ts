import { db } from '$lib/server/db';
import { loadConverterDetail } from '$lib/server/queries/public';
import { apiConverterDetail } from '$lib/server/queries/public-api';
import { converterQuery as params } from '$lib/server/api/contract';
import { searchObject, viewpoint } from '$lib/server/queries/public-params';
import { badRequest, cachedJson, DATA_LICENCE, notFound } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

/** One converter with its revisions' level reports and its listings. */
export const GET: RequestHandler = async ({ params: route, url, request }) => {
	const parsed = params.safeParse(searchObject(url));
	if (!parsed.success) return badRequest(parsed.error);
	const view = viewpoint(parsed.data, null, request.headers.get('accept-language'));
	const d = await loadConverterDetail(db, route.slug, view);
	if (!d) return notFound('converter');
	return cachedJson(request, {
		region: view.region,
		currency: view.currency,
		licence: DATA_LICENCE.name,
		...apiConverterDetail(d)
	});
};
