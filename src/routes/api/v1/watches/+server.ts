/**
 * The signed-in member's watches as JSON.
 *   GET  /api/v1/watches                         -> { watches: [...] }
 *   POST /api/v1/watches {converterSlug, minBand?} -> 201 { watch } (200 when it already existed)
 * 401 for visitors; 400 problem details (RFC 9457) with field messages in `errors` for bad input.
 */
import { json } from '@sveltejs/kit';
import { requireApiRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { apiWatchSchema, fieldErrors, listWatches, watchConverter, WatchInputError } from '$lib/server/alerts/watches';
import { BodyError, readJson } from '$lib/server/http/body';
import { problem } from '$lib/server/http/problem';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireApiRole(event, 'member');
	return json({ watches: await listWatches(db, user.id) }, { headers: { 'cache-control': 'no-store' } });
};

export const POST: RequestHandler = async (event) => {
	const user = requireApiRole(event, 'member');
	let body: unknown;
	try {
		body = await readJson(event.request);
	} catch (err) {
		if (err instanceof BodyError)
			return problem(400, `${err.message} For example {"converterSlug": "some-converter", "minBand": "close"}.`);
		throw err;
	}
	const parsed = apiWatchSchema.safeParse(body);
	if (!parsed.success) return problem(400, 'Check the highlighted fields.', { errors: fieldErrors(parsed.error) });
	try {
		const { id, created } = await watchConverter(db, user.id, parsed.data);
		const watch = (await listWatches(db, user.id)).find((w) => w.id === id);
		return json({ watch }, { status: created ? 201 : 200 });
	} catch (err) {
		if (err instanceof WatchInputError) return problem(400, err.message, { errors: { [err.field]: err.message } });
		throw err;
	}
};
