import { redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { readTraceAction, saveRunAction } from '$lib/server/curate/bench-actions';
import { catalogueOptions } from '$lib/server/curate/catalogue';
import { emptyForm } from '$lib/server/curate/forms';
import { benchRunSchema } from '$lib/server/curate/schemas';
import { appStorage } from '$lib/server/storage/app';
import type { Actions, PageServerLoad } from './$types';
import { formOr400 } from '$lib/server/http/body';

// Members' bench runs are stored as pending: they count only after a curator accepts them.
export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'member');
	const { revisions } = await catalogueOptions(db);
	return {
		revisions: revisions.map((r) => ({ value: r.id, label: r.label })),
		form: await emptyForm(benchRunSchema, {
			measuredBy: user.name ?? '',
			measuredOn: new Date().toISOString().slice(0, 10)
		})
	};
};

export const actions: Actions = {
	readTrace: async (event) => {
		const user = requireRole(event, 'member');
		return readTraceAction(db, appStorage(), user, await formOr400(event.request));
	},
	save: async (event) => {
		const user = requireRole(event, 'member');
		const res = await saveRunAction(db, user, await formOr400(event.request));
		if (!res.ok) return res.failure;
		redirect(303, '/teardowns?sent=run');
	}
};
