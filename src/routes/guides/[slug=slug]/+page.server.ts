import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { renderMarkdown } from '$lib/server/markdown';
import { loadGuide } from '$lib/server/queries/public';
import { viewpoint } from '$lib/server/queries/public-params';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, cookies, request }) => {
	const view = viewpoint({}, cookies, request.headers.get('accept-language'));
	const guide = await loadGuide(db, params.slug, view);
	if (!guide) error(404, 'No published guide by that name.');
	const { bodyMarkdown, ...rest } = guide;
	return { view, guide: rest, html: renderMarkdown(bodyMarkdown) };
};
