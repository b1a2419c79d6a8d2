import { error, redirect } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { attempt, emptyForm, idParam, invalid, orHttpError, validate } from '$lib/server/curate/forms';
import { listingsWithState, requestPoll, testRead, updateListing } from '$lib/server/curate/listings';
import { listingSettingsSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const id = idParam(event.params.id);
	const [listing] = await listingsWithState(db, { listingId: id });
	if (!listing) error(404, 'No such listing.');
	return {
		listing,
		form: await emptyForm(listingSettingsSchema, {
			active: listing.active,
			pollIntervalMinutes: listing.pollIntervalMinutes
		})
	};
};

export const actions: Actions = {
	// Fetch now and show what the extractor reads; nothing is stored.
	testRead: async (event) => {
		requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const read = await orHttpError(() => testRead(db, id, { allowPrivate: env.FEED_ALLOW_PRIVATE === 'true' }));
		return { read };
	},
	pollNow: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		await orHttpError(() => requestPoll(db, user, id));
		redirect(303, `/curate/listings/${id}?poll=requested`);
	},
	settings: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const form = await validate(event.request, listingSettingsSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => updateListing(db, user, id, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/listings/${id}`);
	}
};
