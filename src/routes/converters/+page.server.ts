import { db } from '$lib/server/db';
import { loadCatalogue } from '$lib/server/queries/public';
import { catalogueParams, parseLenient, searchObject, toCatalogueFilter, viewpoint } from '$lib/server/queries/public-params';
import { filterCatalogue } from '$lib/finder';
import type { PageServerLoad } from './$types';

/** Cards per page: a catalogue of thousands stays quick to render and to read on a phone. */
const PAGE_SIZE = 48;

export const load: PageServerLoad = async ({ url, cookies, request }) => {
	const { data: params, issues } = parseLenient(catalogueParams, searchObject(url));
	const view = viewpoint(params, cookies, request.headers.get('accept-language'));
	const all = await loadCatalogue(db, view);
	const matching = filterCatalogue(all, toCatalogueFilter(params, view.currency));
	const pages = Math.max(1, Math.ceil(matching.length / PAGE_SIZE));
	const page = Math.min(params.page ?? 1, pages);
	const converters = matching.slice((page - 1) * PAGE_SIZE, page * PAGE_SIZE);
	return { view, params, issues, total: all.length, matching: matching.length, page, pages, converters };
};
