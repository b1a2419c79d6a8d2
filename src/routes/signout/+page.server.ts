import { redirect } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth/config';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = () => redirect(303, '/');

export const actions: Actions = {
	default: async (event) => {
		const request = new Request(event.request.url, {
			method: 'POST',
			headers: event.request.headers,
			body: new URLSearchParams({ redirectTo: '/' })
		});
		await signOut({ ...event, request });
	}
};
