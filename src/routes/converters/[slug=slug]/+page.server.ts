import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { loadConverterDetail } from '$lib/server/queries/public';
import { figuresForListings } from '$lib/server/queries/public-history';
import { catalogueParams, parseLenient, searchObject, viewpoint } from '$lib/server/queries/public-params';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, url, cookies, request, locals }) => {
	const { data: p } = parseLenient(catalogueParams.pick({ region: true, currency: true }), searchObject(url));
	const view = viewpoint(p, cookies, request.headers.get('accept-language'));
	const detail = await loadConverterDetail(db, params.slug, view);
	if (!detail) error(404, 'No converter by that name in the catalogue.');
	const figures = await figuresForListings(db, detail.listings.map((l) => l.listingId));
	return {
		view,
		detail,
		figures: Object.fromEntries(figures),
		signedIn: locals.user !== null
	};
};
