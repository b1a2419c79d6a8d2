import { redirect } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { catalogueOptions } from '$lib/server/curate/catalogue';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
import { createListing, listingsWithState, shopOptions } from '$lib/server/curate/listings';
import { shopHealth } from '$lib/server/queries/shops';
import { listingSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const [listings, health, shops, options] = await Promise.all([
		listingsWithState(db),
		shopHealth(db),
		shopOptions(db),
		catalogueOptions(db)
	]);
	return {
		listings,
		health,
		shops: shops.map((s) => ({ value: s.id, label: `${s.label} (${new URL(s.baseUrl).host})` })),
		converters: options.converters.map((c) => ({ value: c.id, label: c.label })),
		form: await emptyForm(listingSchema, { format: 'jsonld' })
	};
};

export const actions: Actions = {
	create: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, listingSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () =>
			createListing(db, user, form.data, { allowPrivate: env.FEED_ALLOW_PRIVATE === 'true' })
		);
		if (!res.ok) return res.failure;
		redirect(303, `/curate/listings/${res.value.id}`);
	}
};
