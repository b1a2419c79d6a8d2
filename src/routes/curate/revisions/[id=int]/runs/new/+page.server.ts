import { error, redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { readTraceAction, saveRunAction } from '$lib/server/curate/bench-actions';
import { getRevision } from '$lib/server/curate/catalogue';
import { emptyForm, idParam } from '$lib/server/curate/forms';
import { benchRunSchema } from '$lib/server/curate/schemas';
import { appStorage } from '$lib/server/storage/app';
import type { Actions, PageServerLoad } from './$types';
import { formOr400 } from '$lib/server/http/body';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'curator');
	const id = idParam(event.params.id);
	const found = await getRevision(db, id);
	if (!found) error(404, 'No such revision.');
	return {
		...found,
		form: await emptyForm(benchRunSchema, {
			revisionId: id,
			measuredBy: user.name ?? user.email,
			measuredOn: new Date().toISOString().slice(0, 10)
		})
	};
};

export const actions: Actions = {
	readTrace: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const data = await formOr400(event.request);
		data.set('revisionId', String(id));
		return readTraceAction(db, appStorage(), user, data);
	},
	save: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const res = await saveRunAction(db, user, await formOr400(event.request), id);
		if (!res.ok) return res.failure;
		redirect(303, `/curate/revisions/${id}?run=${res.id}`);
	}
};
