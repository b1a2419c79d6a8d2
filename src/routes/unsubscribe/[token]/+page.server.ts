/**
 * One-click unsubscribe (RFC 8058): POST to this URL stops the alerts the signed token names,
 * without sign-in or cookies, answering 200 with no redirect (RFC 8058 section 3.2). A GET
 * never acts (link scanners and previews open links): it shows a confirm button that POSTs.
 */
import { fail } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { db } from '$lib/server/db';
import { describeToken, unsubscribeWithToken } from '$lib/server/alerts/unsubscribe';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, setHeaders }) => {
	setHeaders({ 'cache-control': 'no-store', 'x-robots-tag': 'noindex' });
	const described = await describeToken(db, env.AUTH_SECRET, params.token);
	return {
		valid: described != null,
		what: described?.what ?? null,
		alreadyStopped: described?.alreadyStopped ?? false
	};
};

export const actions: Actions = {
	default: async ({ params }) => {
		const outcome = await unsubscribeWithToken(db, env.AUTH_SECRET, params.token);
		if (!outcome)
			return fail(400, {
				error: 'This unsubscribe link is not valid. It may have been cut short: copy the whole link from the e-mail.'
			});
		return { done: true, what: outcome.what };
	}
};
