import { redirect } from '@sveltejs/kit';
import { authOrigin, signOut } from '$lib/server/auth/config';
import { withForm } from '$lib/server/auth/forward';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = () => redirect(303, '/');

export const actions: Actions = {
	default: async (event) => {
		await signOut(withForm(event, { redirectTo: '/' }, authOrigin));
	}
};
