import { redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { createShop, listShops } from '$lib/server/admin';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
import { shopSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin');
	return {
		shops: await listShops(db),
		form: await emptyForm(shopSchema, { region: 'eu', defaultFormat: 'jsonld', active: true })
	};
};

export const actions: Actions = {
	create: async (event) => {
		const user = requireRole(event, 'admin');
		const form = await validate(event.request, shopSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => createShop(db, user, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/admin/shops/${res.value.id}`);
	}
};
