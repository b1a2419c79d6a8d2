import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { authOrigin, signIn } from '$lib/server/auth/config';
import { withForm } from '$lib/server/auth/forward';
import { readForm } from '$lib/server/http/body';
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

export const load: PageServerLoad = ({ locals, url }) => {
	if (locals.user) redirect(303, '/account');
	return { next: url.searchParams.get('next') ?? '' };
};

export const actions: Actions = {
	default: async (event) => {
		const form = await readForm(event.request.clone()).catch(() => null);
		if (!form) return fail(400, { email: '', error: 'Send the sign-in form as form data.' });
		const email = String(form.get('email') ?? '');
		const parsed = SignInForm.safeParse({ email, next: form.get('next') ?? undefined });
		if (!parsed.success) {
			return fail(400, { email: email.slice(0, 320), error: parsed.error.issues[0].message });
		}
		const limit = await checkSignInLimits(parsed.data.email, event.getClientAddress());
		if (!limit.allowed) {
			event.setHeaders({ 'retry-after': String(limit.retryAfterSeconds) });
			return fail(429, { email: parsed.data.email, error: tooManySignIns(limit.retryAfterSeconds) });
		}
		// Auth.js reads providerId, email and redirectTo from the posted form.
		await signIn(
			withForm(event, { providerId: 'nodemailer', email: parsed.data.email, redirectTo: parsed.data.next }, authOrigin)
		);
	}
};
