import type { RequestEvent } from '@sveltejs/kit';
import { headersForOrigin } from '$lib/server/security/public-origin';

/**
 * A copy of the event whose request body is the given form fields, url-encoded. Auth.js's
 * SvelteKit actions read their options from the posted form; this lets our actions validate
 * first and pass on only what Auth.js should see. Host headers are replaced by the public
 * origin's, and so is the event's URL: nothing a client sends decides where links point.
 */
export function withForm<E extends RequestEvent>(event: E, fields: Record<string, string>, origin: URL | null): E {
	// Without a configured ORIGIN no link is ever e-mailed (auth/config.ts refuses), so the
	// request's own URL is harmless here.
	origin ??= new URL(event.url.origin);
	const headers = headersForOrigin(event.request.headers, origin);
	headers.set('content-type', 'application/x-www-form-urlencoded');
	headers.delete('content-length');
	const url = new URL(event.url.pathname + event.url.search, origin);
	const request = new Request(url, { method: 'POST', headers, body: new URLSearchParams(fields) });
	return { ...event, url, request };
}
