import { redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { createChip, listChips } from '$lib/server/curate/catalogue';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
import { chipSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	return { chips: await listChips(db), form: await emptyForm(chipSchema) };
};

export const actions: Actions = {
	create: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, chipSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => createChip(db, user, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/chips/${res.value.id}`);
	}
};
