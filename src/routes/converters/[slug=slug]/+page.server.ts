import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { listWatches } from '$lib/server/alerts/watches';
import { loadConverterDetail, pageRevision } from '$lib/server/queries/public';
import { listing90DayFigures } from '$lib/server/queries/history';
import { listingNotes } from '$lib/server/queries/shops';
import { renderOnly } from '$lib/render-only';
import { catalogueParams, parseLenient, searchObject, viewpoint } from '$lib/server/queries/public-params';
import type { PageServerLoad } from './$types';

/**
 * Served without the app's JavaScript, like the catalogue: hydrating the whole page cost a phone
 * most of its blocking time, for a page that is mostly text and tables. Its live sections (the
 * charts, the what-if, the picture preview, the watch button) are islands (src/lib/islands),
 * and static/enhance.js runs the theme switch.
 */
export const csr = false;

export const load: PageServerLoad = async ({ params, url, cookies, request, locals, isDataRequest }) => {
	const { data: p } = parseLenient(catalogueParams.pick({ region: true, currency: true }), searchObject(url));
	const view = viewpoint(p, cookies, request.headers.get('accept-language'));
	const detail = await loadConverterDetail(db, params.slug, view);
	if (!detail) error(404, 'No converter by that name in the catalogue.');
	const [figures, notes, watches] = await Promise.all([
		listing90DayFigures(
			db,
			detail.listings.map((l) => l.listingId)
		),
		listingNotes(
			db,
			detail.listings.map((l) => l.listingId)
		),
		locals.user ? listWatches(db, locals.user.id) : Promise.resolve([])
	]);
	const d90 = Object.fromEntries(
		[...figures].map(([id, f]) => [
			id,
			{
				lowestMinor: f.lowestMinor,
				currency: f.currency,
				buyableShare: f.buyableShare,
				restocks: f.restocks,
				typicalRestockHours: f.typicalRestockHours
			}
		])
	);
	return renderOnly(
		{
			view,
			detail: { ...detail, revisions: detail.revisions.map(pageRevision) },
			figures: d90,
			notes: Object.fromEntries(
				[...notes].map(([id, n]) => [id, { outlook: n.outlook.text, shopSlug: n.shop.slug, shopLine: n.shop.line }])
			),
			signedIn: locals.user !== null,
			watchId: watches.find((w) => w.converterSlug === params.slug)?.id ?? null
		},
		{ isDataRequest }
	);
};
