import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { listWatches } from '$lib/server/alerts/watches';
import { loadConverterPage, pageRevision } from '$lib/server/queries/public';
import { HTML_BUILD, revisionPanels } from '$lib/server/rendered-html';
import { renderOnly } from '$lib/render-only';
import { parseLenient, searchObject, viewpoint, viewpointParams } from '$lib/server/queries/public-params';
import type { PageServerLoad } from './$types';

/**
 * Served without the app's JavaScript, like the catalogue: hydrating the whole page cost a phone
 * most of its blocking time, for a page that is mostly text and tables. Its live sections (the
 * charts, the what-if, the picture preview, the watch button) are islands (src/lib/islands),
 * and static/enhance.js runs the theme switch.
 */
export const csr = false;

export const load: PageServerLoad = async ({ params, url, cookies, request, locals, isDataRequest }) => {
	const { data: p } = parseLenient(viewpointParams, searchObject(url));
	const view = viewpoint(p, cookies, request.headers.get('accept-language'));
	// an HTML page shows the revisions only through their panels; a data request sends them whole
	const found = await loadConverterPage(db, params.slug, view, HTML_BUILD, !isDataRequest);
	if (!found) error(404, 'No converter by that name in the catalogue.');
	const { detail, panels } = found;
	const revisions = detail.revisions.map(pageRevision);
	// the same for every visitor: rendered once per document and kept with it
	const panelsHtml = await revisionPanels(db, panels, revisions, `${detail.entry.brand} ${detail.entry.model}`);
	const watches = locals.user ? await listWatches(db, locals.user.id) : [];
	return renderOnly(
		{
			view,
			detail: { ...detail, revisions },
			revisionsHtml: panelsHtml,
			figures: detail.figures,
			notes: detail.notes,
			signedIn: locals.user !== null,
			watchId: watches.find((w) => w.converterSlug === params.slug)?.id ?? null
		},
		{ isDataRequest }
	);
};
