import { error, redirect } from '@sveltejs/kit';
import { shopById, updateShop } from '$lib/server/admin';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { attempt, emptyForm, idParam, invalid, validate } from '$lib/server/curate/forms';
import { shopSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin');
	const id = idParam(event.params.id);
	const shop = await shopById(db, id);
	if (!shop) error(404, 'No such shop.');
	const cfg =
		shop.feedConfig && Object.keys(shop.feedConfig as object).length ? JSON.stringify(shop.feedConfig, null, 2) : '';
	return {
		shop,
		form: await emptyForm(shopSchema, {
			name: shop.name,
			slug: shop.slug,
			region: shop.region,
			currency: shop.currency,
			baseUrl: shop.baseUrl,
			defaultFormat: shop.defaultFormat,
			maxConcurrency: shop.maxConcurrency,
			minSpacingMs: shop.minSpacingMs,
			feedConfig: cfg,
			shipsTo: shop.shipsTo,
			active: shop.active
		})
	};
};

export const actions: Actions = {
	update: async (event) => {
		const user = requireRole(event, 'admin');
		const id = idParam(event.params.id);
		const form = await validate(event.request, shopSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => updateShop(db, user, id, form.data));
		if (!res.ok) return res.failure;
		redirect(303, '/admin/shops');
	}
};
