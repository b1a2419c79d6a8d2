import { redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
import { createGuide, listGuides } from '$lib/server/curate/guides';
import { guideSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	return { guides: await listGuides(db), form: await emptyForm(guideSchema) };
};

export const actions: Actions = {
	create: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, guideSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => createGuide(db, user, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/guides/${res.value.id}`);
	}
};
