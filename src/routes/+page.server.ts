import { db } from '$lib/server/db';
import { loadCataloguePage } from '$lib/server/queries/read-model';
import { viewpoint } from '$lib/server/queries/public-params';
import type { PageServerLoad } from './$types';

/** Converters on the home page: the catalogue's first cards, best band first (the rest are one click away). */
const HOME_CARDS = 12;

export const load: PageServerLoad = async ({ cookies, request }) => {
	const view = viewpoint({}, cookies, request.headers.get('accept-language'));
	const { entries, total } = await loadCataloguePage(
		db,
		view,
		{ sort: 'band' },
		{ pageSize: HOME_CARDS, lastChecked: false }
	);
	return {
		total,
		converters: entries.map((e) => ({
			slug: e.slug,
			brand: e.brand,
			name: e.model,
			hasAudioOut: e.hasAudioOut,
			revisions: e.revisions.map((r) => ({
				code: r.code,
				chip: r.chip,
				band: r.band,
				score: r.score,
				deviationIre: r.deviationIre ?? null,
				bandReason: r.bandReason ?? null,
				runs: r.runs,
				retired: r.retired,
				seenTo: r.seenTo
			}))
		}))
	};
};
