import { db } from '$lib/server/db';
import { loadCatalogue } from '$lib/server/queries/public';
import { catalogueParams, parseLenient, searchObject, toCatalogueFilter, viewpoint } from '$lib/server/queries/public-params';
import { filterCatalogue } from '$lib/finder';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ url, cookies, request }) => {
	const { data: params, issues } = parseLenient(catalogueParams, searchObject(url));
	const view = viewpoint(params, cookies, request.headers.get('accept-language'));
	const all = await loadCatalogue(db, view);
	const converters = filterCatalogue(all, toCatalogueFilter(params, view.currency));
	return { view, params, issues, total: all.length, converters };
};
