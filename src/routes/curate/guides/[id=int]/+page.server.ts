import { error, fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { catalogueOptions } from '$lib/server/curate/catalogue';
import { attempt, emptyForm, idParam, invalid, validate, orHttpError } from '$lib/server/curate/forms';
import {
	getGuide,
	removePick,
	renderGuideMarkdown,
	savePick,
	setGuideStatus,
	updateGuide
} from '$lib/server/curate/guides';
import { guidePickSchema, guideSchema, guideStatusSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';
import { formOr400 } from '$lib/server/http/body';
import { dbId } from '$lib/server/http/numbers';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const id = idParam(event.params.id);
	const found = await getGuide(db, id);
	if (!found) error(404, 'No such guide.');
	const { guide } = found;
	return {
		...found,
		preview: renderGuideMarkdown(guide.bodyMarkdown),
		converters: (await catalogueOptions(db)).converters.map((c) => ({ value: c.id, label: c.label })),
		form: await emptyForm(
			guideSchema,
			{ title: guide.title, slug: guide.slug, summary: guide.summary, bodyMarkdown: guide.bodyMarkdown },
			'guide'
		),
		pickForm: await emptyForm(guidePickSchema, { position: found.picks.length }, 'pick'),
		statusForm: await emptyForm(guideStatusSchema, { status: guide.status }, 'status')
	};
};

export const actions: Actions = {
	save: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const form = await validate(event.request, guideSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => updateGuide(db, user, id, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/guides/${id}?saved=1`);
	},
	// Render what is in the editor without saving it.
	preview: async (event) => {
		requireRole(event, 'curator');
		const form = await validate(event.request, guideSchema);
		return { form, preview: renderGuideMarkdown(form.data.bodyMarkdown ?? '') };
	},
	status: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const statusForm = await validate(event.request, guideStatusSchema);
		if (!statusForm.valid) return fail(400, { statusForm });
		const res = await attempt(statusForm, () => setGuideStatus(db, user, id, statusForm.data.status));
		if (!res.ok) return fail(res.failure.status, { statusForm: res.failure.data.form });
		redirect(303, `/curate/guides/${id}`);
	},
	addPick: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const pickForm = await validate(event.request, guidePickSchema);
		if (!pickForm.valid) return fail(400, { pickForm });
		const res = await attempt(pickForm, () => savePick(db, user, id, pickForm.data));
		if (!res.ok) return fail(res.failure.status, { pickForm: res.failure.data.form });
		redirect(303, `/curate/guides/${id}`);
	},
	removePick: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const parsed = z
			.object({ converterId: dbId('No pick chosen.') })
			.safeParse(Object.fromEntries(await formOr400(event.request)));
		// A button with a hidden id: only a crafted post gets here, so a plain 400 (no field to mark).
		if (!parsed.success) error(400, 'No pick chosen.');
		const { converterId } = parsed.data;
		await orHttpError(() => removePick(db, user, id, converterId));
		redirect(303, `/curate/guides/${id}`);
	}
};
