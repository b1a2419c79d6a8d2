/**
 * Our own cross-site form check, in place of SvelteKit's built-in one, which we switch off
 * (svelte.config.js) only because it cannot exempt a route. It refuses form posts whose
 * Origin is missing or foreign, as SvelteKit does, except on the one-click unsubscribe
 * endpoint: RFC 8058 section 3.1 has mail providers POST there with no cookies and often no
 * Origin, and that endpoint is safe to call cross-site (a signed token, idempotent, no session).
 */
const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain'];
const UNSAFE_METHODS = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);
const EXEMPT_PREFIXES = ['/unsubscribe/'];

export function isForbiddenCrossSiteForm(request: Request, url: URL): boolean {
	if (!UNSAFE_METHODS.has(request.method)) return false;
	const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	if (!FORM_TYPES.includes(type)) return false;
	if (EXEMPT_PREFIXES.some((p) => url.pathname.startsWith(p))) return false;
	return request.headers.get('origin') !== url.origin;
}

/**
 * JSON APIs (and the upload endpoint) that change state: a request whose Origin names another
 * site is refused. Browsers always send Origin on such cross-site requests; clients that send
 * none (scripts) are judged by their session cookie as usual.
 */
export function isForeignOriginApiWrite(request: Request, url: URL): boolean {
	if (!UNSAFE_METHODS.has(request.method)) return false;
	if (!url.pathname.startsWith('/api/') && url.pathname !== '/files') return false;
	const origin = request.headers.get('origin');
	return origin !== null && origin !== url.origin;
}
