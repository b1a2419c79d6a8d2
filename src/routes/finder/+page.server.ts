import { db } from '$lib/server/db';
import { loadFinder } from '$lib/server/queries/read-model';
import { finderParams, parseLenient, searchObject, toFinderInput, viewpoint } from '$lib/server/queries/public-params';
import { finderItem } from '$lib/finder';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ url, cookies, request }) => {
	const { data: params, issues } = parseLenient(finderParams, searchObject(url));
	const view = viewpoint(params, cookies, request.headers.get('accept-language'));
	const results = (await loadFinder(db, view, toFinderInput(params, view))).map(finderItem);
	return { view, params, issues, results };
};
