import { isRedirect, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { authOrigin, signIn } from '$lib/server/auth/config';
import { withForm } from '$lib/server/auth/forward';
import { FieldError } from '$lib/server/curate/common';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
import { tooManySignIns } from '$lib/server/security/rate-limit';
import { checkSignInLimits } from '$lib/server/security/signin-limit';
import type { Actions, PageServerLoad } from './$types';

const SignInForm = z.object({
	email: z
		.string()
		.max(320, 'An e-mail address is at most 320 characters.')
		.trim()
		.toLowerCase()
		.pipe(z.email({ message: 'Enter an e-mail address like name@example.com.' })),
	next: z
		.string()
		.max(2000)
		.optional()
		// Only same-site paths: never bounce a visitor to another site after sign-in.
		.transform((v) => (v && v.startsWith('/') && !v.startsWith('//') && !v.includes('\\') ? v : '/account'))
});

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user) redirect(303, '/account');
	return { next: url.searchParams.get('next') ?? '', form: await emptyForm(SignInForm) };
};

export const actions: Actions = {
	default: async (event) => {
		const form = await validate(event.request, SignInForm);
		const { email, next } = form.data;
		// A refusal carries back only the address as typed (capped); the page keeps `next` itself.
		form.data.email = email.slice(0, 320);
		form.data.next = '';
		if (!form.valid) return invalid(form);
		const res = await attempt(form, async () => {
			const limit = await checkSignInLimits(email, event.getClientAddress());
			if (!limit.allowed) {
				event.setHeaders({ 'retry-after': String(limit.retryAfterSeconds) });
				throw new FieldError('email', tooManySignIns(limit.retryAfterSeconds), 429);
			}
		});
		if (!res.ok) return res.failure;
		// Auth.js reads providerId, email and redirectTo from the posted form.
		try {
			await signIn(withForm(event, { providerId: 'nodemailer', email, redirectTo: next }, authOrigin));
		} catch (err) {
			// Auth.js answers with its own /auth/verify-request, which only redirects to our check-inbox page
			// (pages.verifyRequest). Going there at once keeps an enhanced form's navigation inside the app,
			// where the detour was a failed client-side route and a second request.
			if (isRedirect(err) && new URL(err.location, event.url).pathname.endsWith('/verify-request'))
				redirect(303, '/signin/check-inbox');
			throw err;
		}
	}
};
