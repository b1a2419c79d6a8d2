/**
 * The machine side of one-click unsubscribe (RFC 8058 section 3.2). Mail providers POST
 * "List-Unsubscribe=One-Click" here without cookies and without asking for HTML, so SvelteKit
 * routes their request to this endpoint; a person's browser (Accept: text/html) gets the page
 * and its confirm form instead. Plain 200 or 400, never a redirect.
 */
import { text } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { db } from '$lib/server/db';
import { unsubscribeWithToken } from '$lib/server/alerts/unsubscribe';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ params }) => {
	const outcome = await unsubscribeWithToken(db, env.AUTH_SECRET, params.token);
	const headers = { 'cache-control': 'no-store' };
	if (!outcome) return text('This unsubscribe link is not valid.', { status: 400, headers });
	return text(`Unsubscribed: ${outcome.what}.`, { status: 200, headers });
};
