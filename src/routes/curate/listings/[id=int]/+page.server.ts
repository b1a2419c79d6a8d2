import { error, fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { env } from '$env/dynamic/private';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { idParam, orHttpError } from '$lib/server/curate/forms';
import { listingsWithState, requestPoll, testRead, updateListing } from '$lib/server/curate/listings';
import type { Actions, PageServerLoad } from './$types';
import { formOr400 } from '$lib/server/http/body';
import { wholeNumber } from '$lib/server/http/numbers';

const settingsSchema = z.object({
	active: z.enum(['on']).optional(),
	pollIntervalMinutes: wholeNumber('Minutes, a whole number.').pipe(
		z.number().min(1, 'At least 1 minute.').max(10080, 'At most a week.')
	)
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
		const raw = Object.fromEntries(await formOr400(event.request));
		const parsed = settingsSchema.safeParse(raw);
		if (!parsed.success) return fail(400, { settings: { error: parsed.error.issues[0].message, values: raw } });
		await updateListing(db, user, id, {
			active: parsed.data.active === 'on',
			pollIntervalMinutes: parsed.data.pollIntervalMinutes
		});
		redirect(303, `/curate/listings/${id}`);
	}
};
