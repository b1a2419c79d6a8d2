/**
 * The Auth.js endpoint's own sign-in path (POST /auth/signin/<provider>) gets the same e-mail
 * limits as the /signin page, so nobody can skip them by posting there directly.
 */
import type { Handle } from '@sveltejs/kit';
import { problem } from '$lib/server/http/problem';
import { checkSignInLimits } from './signin-limit';
import { tooManySignIns } from './rate-limit';

export const authEndpointLimit: Handle = async ({ event, resolve }) => {
	if (event.request.method !== 'POST' || !event.url.pathname.startsWith('/auth/signin/')) return resolve(event);
	let email = '';
	try {
		email = String((await event.request.clone().formData()).get('email') ?? '');
	} catch {
		return problem(400, 'Send the sign-in form as form data.');
	}
	if (!email) return resolve(event);
	const answer = await checkSignInLimits(email, event.getClientAddress());
	if (!answer.allowed) {
		return problem(429, tooManySignIns(answer.retryAfterSeconds), {
			headers: { 'retry-after': String(answer.retryAfterSeconds) }
		});
	}
	return resolve(event);
};
