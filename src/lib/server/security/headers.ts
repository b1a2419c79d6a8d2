/**
 * Response headers every answer carries (pages, API, /auth/*, refusals), plus `private, no-store` on
 * anything built for a signed-in user. The Content-Security-Policy itself comes from
 * `kit.csp` in svelte.config.js (SvelteKit adds nonces/hashes for its own scripts).
 * HSTS is the TLS proxy's job (see README, "Deployment behind TLS").
 */
export function applySecurityHeaders(response: Response, signedIn: boolean): Response {
	let headers: Headers;
	try {
		headers = response.headers;
		headers.set('X-Content-Type-Options', 'nosniff');
	} catch {
		// Immutable headers (a fetch() response passed through): copy it.
		response = new Response(response.body, response);
		headers = response.headers;
		headers.set('X-Content-Type-Options', 'nosniff');
	}
	headers.set('Referrer-Policy', 'strict-origin-when-cross-origin');
	headers.set('X-Frame-Options', 'DENY');
	headers.set('Cross-Origin-Opener-Policy', 'same-origin');
	if (signedIn && (headers.get('content-type') ?? '').startsWith('text/html'))
		headers.set('Cache-Control', 'private, no-store');
	return response;
}
