import { db } from '$lib/server/db';
import { renderOnly } from '$lib/render-only';
import { catalogueCards, joinedHtml } from '$lib/server/rendered-html';
import { loadCatalogueHtmlPage } from '$lib/server/queries/read-model';
import {
	catalogueParams,
	parseLenient,
	searchObject,
	toCatalogueFilter,
	viewpoint
} from '$lib/server/queries/public-params';
import type { PageServerLoad } from './$types';

/**
 * The catalogue is a list of links and a GET form: served as HTML only, without the app's
 * JavaScript (its budget is 40 kB gzip; SvelteKit's runtime alone is more). static/enhance.js
 * submits the filter form on change and runs the theme switch.
 */
export const csr = false;

/** Cards per page: a catalogue of thousands stays quick to render and to read on a phone. */
const PAGE_SIZE = 48;

export const load: PageServerLoad = async ({ url, cookies, request, isDataRequest }) => {
	const { data: params, issues } = parseLenient(catalogueParams, searchObject(url));
	const view = viewpoint(params, cookies, request.headers.get('accept-language'));
	const found = await loadCatalogueHtmlPage(
		db,
		view,
		toCatalogueFilter(params, view.currency),
		{ page: params.page, pageSize: PAGE_SIZE },
		catalogueCards
	);
	return renderOnly(
		{
			view,
			params,
			issues,
			total: found.total,
			matching: found.matching,
			page: found.page,
			pages: found.pages,
			cardsHtml: joinedHtml(found.cards)
		},
		{ isDataRequest }
	);
};
