import { redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { catalogueOptions } from '$lib/server/curate/catalogue';
import { attempt, emptyForm, fileFrom, invalid, validate } from '$lib/server/curate/forms';
import { shopOptions } from '$lib/server/curate/listings';
import { teardownSchema } from '$lib/server/curate/schemas';
import { submitTeardown } from '$lib/server/curate/teardowns';
import { storePhoto } from '$lib/server/curate/uploads';
import { appStorage } from '$lib/server/storage/app';
import type { Actions, PageServerLoad } from './$types';
import { formOr400 } from '$lib/server/http/body';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'member');
	const [options, shops] = await Promise.all([catalogueOptions(db), shopOptions(db)]);
	return { ...options, shops, form: await emptyForm(teardownSchema) };
};

export const actions: Actions = {
	default: async (event) => {
		const user = requireRole(event, 'member');
		const data = await formOr400(event.request);
		const form = await validate(data, teardownSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, async () => {
			// Without JavaScript the photo arrives with the form instead of ahead of it.
			const photo = await fileFrom(data, 'photo');
			if (photo) form.data.photoFileId = (await storePhoto(db, appStorage(), user, photo)).id;
			return submitTeardown(db, user, form.data);
		});
		if (!res.ok) return res.failure;
		redirect(303, '/teardowns?sent=report');
	}
};
