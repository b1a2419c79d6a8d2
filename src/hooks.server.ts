import { sequence } from '@sveltejs/kit/hooks';
import type { Handle } from '@sveltejs/kit';
import { authHandle } from '$lib/server/auth/config';
import { ROLES, type Role } from '$lib/roles';
import { isForbiddenCrossSiteForm } from '$lib/server/csrf';

/** Refuse cross-site form posts (see $lib/server/csrf for the one exemption). */
const originCheck: Handle = async ({ event, resolve }) => {
	if (isForbiddenCrossSiteForm(event.request, event.url)) {
		return new Response(`Cross-site ${event.request.method} form submissions are forbidden`, { status: 403 });
	}
	return resolve(event);
};

/** Put the signed-in user (with role) into locals once per request. */
const userHandle: Handle = async ({ event, resolve }) => {
	const session = await event.locals.auth();
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

/** Baseline security headers on every response. */
const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'strict-origin-when-cross-origin');
	response.headers.set('X-Frame-Options', 'DENY');
	return response;
};

export const handle = sequence(originCheck, authHandle, userHandle, securityHeaders);
