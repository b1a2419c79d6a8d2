import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { signIn } from '$lib/server/auth/config';
import { withForm } from '$lib/server/auth/forward';
import type { Actions, PageServerLoad } from './$types';

const SignInForm = z.object({
	email: z.string().trim().toLowerCase().pipe(z.email({ message: 'Enter an e-mail address like name@example.com.' })),
	next: z
		.string()
		.optional()
		// Only same-site paths: never bounce a visitor to another site after sign-in.
		.transform((v) => (v && v.startsWith('/') && !v.startsWith('//') ? v : '/account'))
});

export const load: PageServerLoad = ({ locals, url }) => {
	if (locals.user) redirect(303, '/account');
	return { next: url.searchParams.get('next') ?? '' };
};

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.clone().formData();
		const parsed = SignInForm.safeParse({ email: form.get('email') ?? '', next: form.get('next') ?? undefined });
		if (!parsed.success) {
			return fail(400, { email: String(form.get('email') ?? ''), error: parsed.error.issues[0].message });
		}
		// Auth.js reads providerId, email and redirectTo from the posted form.
		await signIn(withForm(event, { providerId: 'nodemailer', email: parsed.data.email, redirectTo: parsed.data.next }));
	}
};
