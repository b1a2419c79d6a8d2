import { db } from '$lib/server/db';
import { loadRevision } from '$lib/server/queries/public';
import { apiRevision } from '$lib/server/queries/public-api';
import { cachedJson, DATA_LICENCE, notFound } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

/** One revision with its accepted bench runs and their level reports. */
export const GET: RequestHandler = async ({ params, request }) => {
	const r = await loadRevision(db, Number(params.id));
	if (!r) return notFound('revision');
	return cachedJson(request, { licence: DATA_LICENCE.name, converter: r.converter, revision: apiRevision(r.revision) });
};
