import { redirect } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { loadCompare } from '$lib/server/queries/public';
import { listConverterNames } from '$lib/server/queries/read-model';
import { viewpoint } from '$lib/server/queries/public-params';
import type { PageServerLoad } from './$types';

const MAX = 4;
const SLUG = /^[a-z0-9]+(-[a-z0-9]+)*$/;

/** The c= list: comma-separated slugs, de-duplicated, valid ones only, at most four. */
function slugsOf(url: URL): string[] {
	const raw = url.searchParams.getAll('c').flatMap((v) => v.split(','));
	return [...new Set(raw.map((s) => s.trim()).filter((s) => SLUG.test(s)))].slice(0, MAX);
}

export const load: PageServerLoad = async ({ url, cookies, request }) => {
	const slugs = slugsOf(url);
	// The no-JS add form sends c=<current list>&add=<slug>: fold it into one canonical URL.
	const add = url.searchParams.get('add');
	if (add !== null) {
		const next = add && SLUG.test(add) && !slugs.includes(add) ? [...slugs, add].slice(0, MAX) : slugs;
		redirect(303, next.length ? `/compare?c=${next.join(',')}` : '/compare');
	}
	const view = viewpoint({}, cookies, request.headers.get('accept-language'));
	const [items, all] = await Promise.all([loadCompare(db, slugs, view), listConverterNames(db)]);
	return {
		view,
		items,
		max: MAX,
		choices: all.filter((c) => !slugs.includes(c.slug)).map((c) => ({ slug: c.slug, name: `${c.brand} ${c.model}` }))
	};
};
