import type { RequestEvent } from '@sveltejs/kit';

/**
 * A copy of the event whose request body is the given form fields, url-encoded. Auth.js's
 * SvelteKit actions read their options from the posted form; this lets our actions validate
 * first and pass on only what Auth.js should see.
 */
export function withForm<E extends RequestEvent>(event: E, fields: Record<string, string>): E {
	const headers = new Headers(event.request.headers);
	headers.set('content-type', 'application/x-www-form-urlencoded');
	headers.delete('content-length');
	const request = new Request(event.request.url, { method: 'POST', headers, body: new URLSearchParams(fields) });
	return { ...event, request };
}
