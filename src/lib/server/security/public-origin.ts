/**
 * The product's public origin, from configuration only. Links in e-mails and Auth.js's own
 * URLs are built from it, never from request headers (Host, X-Forwarded-Host and
 * X-Forwarded-Proto are whatever the client or a misconfigured proxy says they are).
 */

/** `ORIGIN` (adapter-node's variable), falling back to `PUBLIC_BASE_URL`; null when neither parses. */
export function configuredOrigin(env: Record<string, string | undefined>): URL | null {
	for (const raw of [env.ORIGIN, env.PUBLIC_BASE_URL]) {
		if (!raw) continue;
		try {
			const url = new URL(raw);
			if (url.protocol === 'http:' || url.protocol === 'https:') return new URL(url.origin);
		} catch {
			// try the next one
		}
	}
	return null;
}

/**
 * A sign-in link may only point at the configured origin. Throws otherwise, so no e-mail
 * carries a working token to a host an attacker named.
 */
export function assertLinkOnOrigin(link: string, origin: URL | null): void {
	if (!origin) throw new Error('ORIGIN is not configured: refusing to e-mail a sign-in link');
	let url: URL;
	try {
		url = new URL(link);
	} catch {
		throw new Error('Auth.js built a sign-in link that is not a URL');
	}
	if (url.origin !== origin.origin)
		throw new Error(`refusing to e-mail a sign-in link to ${url.origin}: the public origin is ${origin.origin}`);
}

/**
 * Request headers with every host-describing header replaced by the configured origin's, for
 * handing a request on to Auth.js (whose signIn action reads them when AUTH_URL is unset).
 */
export function headersForOrigin(headers: Headers, origin: URL): Headers {
	const out = new Headers(headers);
	out.delete('x-forwarded-host');
	out.delete('forwarded');
	out.set('host', origin.host);
	out.set('x-forwarded-proto', origin.protocol.replace(':', ''));
	return out;
}
