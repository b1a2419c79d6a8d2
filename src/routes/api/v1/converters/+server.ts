import { db } from '$lib/server/db';
import { loadCatalogue } from '$lib/server/queries/public';
import { apiConverter } from '$lib/server/queries/public-api';
import { converterQuery as params } from '$lib/server/api/contract';
import { searchObject, viewpoint } from '$lib/server/queries/public-params';
import { badRequest, cachedJson, DATA_LICENCE } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

/** Every live converter with its revisions, bands and the best offer in a region. */
export const GET: RequestHandler = async ({ url, request }) => {
	const parsed = params.safeParse(searchObject(url));
	if (!parsed.success) return badRequest(parsed.error);
	const view = viewpoint(parsed.data, null, request.headers.get('accept-language'));
	const converters = (await loadCatalogue(db, view)).map(apiConverter);
	return cachedJson(request, { region: view.region, currency: view.currency, licence: DATA_LICENCE.name, converters });
};
