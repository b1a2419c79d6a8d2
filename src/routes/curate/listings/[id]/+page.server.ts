import { error, fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { env } from '$env/dynamic/private';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { idParam } from '$lib/server/curate/forms';
import { listingsWithState, requestPoll, testRead, updateListing } from '$lib/server/curate/listings';
import type { Actions, PageServerLoad } from './$types';

const settingsSchema = z.object({
	active: z.enum(['on']).optional(),
	pollIntervalMinutes: z.coerce.number({ message: 'Minutes, a whole number.' }).int('Minutes, a whole number.').min(1, 'At least 1 minute.').max(10080, 'At most a week.')
});

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const id = idParam(event.params.id);
	const [listing] = await listingsWithState(db, { listingId: id });
	if (!listing) error(404, 'No such listing.');
	return { listing };
};

export const actions: Actions = {
	// Fetch now and show what the extractor reads; nothing is stored.
	testRead: async (event) => {
		requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const read = await testRead(db, id, { allowPrivate: env.FEED_ALLOW_PRIVATE === 'true' });
		return { read };
	},
	pollNow: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		await requestPoll(db, user, id);
		redirect(303, `/curate/listings/${id}?poll=requested`);
	},
	settings: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const raw = Object.fromEntries(await event.request.formData());
		const parsed = settingsSchema.safeParse(raw);
		if (!parsed.success) return fail(400, { settings: { error: parsed.error.issues[0].message, values: raw } });
		await updateListing(db, user, id, { active: parsed.data.active === 'on', pollIntervalMinutes: parsed.data.pollIntervalMinutes });
		redirect(303, `/curate/listings/${id}`);
	}
};
