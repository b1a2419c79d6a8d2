import { sequence } from '@sveltejs/kit/hooks';
import type { Handle } from '@sveltejs/kit';
import { authHandle } from '$lib/server/auth/config';
import { ROLES, type Role } from '$lib/roles';
import { isForbiddenCrossSiteForm, isForeignOriginApiWrite } from '$lib/server/csrf';
import { applySecurityHeaders } from '$lib/server/security/headers';
import { authEndpointLimit } from '$lib/server/security/auth-endpoint';
import { inputGuard } from '$lib/server/security/input-guard';
import { asProblem, problem } from '$lib/server/http/problem';
import { hasSession, pageCacheHandle } from '$lib/server/page-cache';

/** Refuse cross-site form posts (see $lib/server/csrf for the one exemption) and foreign-origin API writes. */
const originCheck: Handle = async ({ event, resolve }) => {
	if (isForbiddenCrossSiteForm(event.request, event.url)) {
		return applySecurityHeaders(
			new Response(`Cross-site ${event.request.method} form submissions are forbidden`, { status: 403 }),
			false
		);
	}
	if (isForeignOriginApiWrite(event.request, event.url)) {
		return applySecurityHeaders(problem(403, 'Requests that change data must come from this site.'), false);
	}
	return resolve(event);
};

/**
 * Put the signed-in user (with role) into locals once per request. Without a session cookie there
 * is no session to look up: Auth.js is not asked, which spares every anonymous request a full
 * pass through its core (a Request, a Response and their JSON) for a known null.
 */
const userHandle: Handle = async ({ event, resolve }) => {
	const session = hasSession(event.cookies) ? await event.locals.auth() : null;
	const u = session?.user as { id?: string; email?: string | null; name?: string | null; role?: string } | undefined;
	event.locals.user =
		u?.id && u.email
			? {
					id: u.id,
					email: u.email,
					name: u.name ?? null,
					role: (ROLES as readonly string[]).includes(u.role ?? '') ? (u.role as Role) : 'member'
				}
			: null;
	return resolve(event);
};

/** Security headers on every response, /auth/* included (so this wraps the auth handle); no-store when signed in. */
const securityHeaders: Handle = async ({ event, resolve }) => {
	let response = await resolve(event);
	// SvelteKit's own error() answers under /api (guards, unknown routes) become problem details too.
	if (event.url.pathname.startsWith('/api/')) response = await asProblem(response);
	return applySecurityHeaders(response, Boolean(event.locals.user) || event.url.pathname.startsWith('/auth/'));
};

// The origin check runs first, before anything (the page cache included) looks at the request.
export const handle = sequence(
	originCheck,
	pageCacheHandle,
	securityHeaders,
	inputGuard,
	authEndpointLimit,
	authHandle,
	userHandle
);
