/**
 * The one server-side role guard. Every protected load, action and API route calls one of
 * these on its first line; route prefixes alone are never trusted.
 */
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { hasRole, type Role } from '$lib/roles';

type User = NonNullable<App.Locals['user']>;

/**
 * For pages and form actions: a visitor is sent to sign in (303, coming back here
 * afterwards); a signed-in user without the role gets 403.
 */
export function requireRole(event: Pick<RequestEvent, 'locals' | 'url'>, role: Role = 'member'): User {
	const user = event.locals.user;
	if (!user) {
		const back = event.url.pathname + event.url.search;
		redirect(303, `/signin?next=${encodeURIComponent(back)}`);
	}
	if (!hasRole(user.role, role)) {
		error(403, `This page needs the ${role} role; you are signed in as ${user.role}.`);
	}
	return user;
}

/**
 * For JSON API routes: 401 for a visitor, 403 for the wrong role. SvelteKit answers
 * errors thrown from +server.ts as JSON `{ message }` bodies.
 */
export function requireApiRole(event: Pick<RequestEvent, 'locals'>, role: Role = 'member'): User {
	const user = event.locals.user;
	if (!user) error(401, 'Sign-in required.');
	if (!hasRole(user.role, role)) error(403, `The ${role} role is required.`);
	return user;
}
