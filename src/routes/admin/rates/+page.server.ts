import { redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { addRate, listRates } from '$lib/server/admin';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
import { rateSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin');
	return {
		rates: await listRates(db),
		form: await emptyForm(rateSchema, { base: 'EUR', day: new Date().toISOString().slice(0, 10) })
	};
};

export const actions: Actions = {
	add: async (event) => {
		const user = requireRole(event, 'admin');
		const form = await validate(event.request, rateSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => addRate(db, user, form.data));
		if (!res.ok) return res.failure;
		redirect(303, '/admin/rates?added=1');
	}
};
