import { error, fail, redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import {
	createRevision,
	getConverter,
	listChips,
	listRevisions,
	setConverterRetired,
	updateConverter
} from '$lib/server/curate/catalogue';
import { attempt, emptyForm, idParam, invalid, validate, orHttpError } from '$lib/server/curate/forms';
import { converterSchema, retireSchema, revisionSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';
import { formOr400 } from '$lib/server/http/body';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const id = idParam(event.params.id);
	const converter = await getConverter(db, id);
	if (!converter) error(404, 'No such converter.');
	const [revisions, chips] = await Promise.all([listRevisions(db, id), listChips(db)]);
	return {
		converter,
		revisions,
		chips: chips.filter((c) => !c.retiredAt).map((c) => ({ value: c.id, label: `${c.name} (${c.maker})` })),
		form: await emptyForm(
			converterSchema,
			{
				brand: converter.brand,
				model: converter.model,
				slug: converter.slug,
				summary: converter.summary,
				hasAudioOut: converter.hasAudioOut,
				power: converter.power,
				outputs: converter.outputs as never
			},
			'converter'
		),
		revisionForm: await emptyForm(revisionSchema, { converterId: id }, 'revision'),
		retireForm: await emptyForm(retireSchema, {}, 'retire')
	};
};

export const actions: Actions = {
	update: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const form = await validate(event.request, converterSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => updateConverter(db, user, id, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/converters/${id}?saved=1`);
	},
	addRevision: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const data = await formOr400(event.request);
		data.set('converterId', String(id));
		const revisionForm = await validate(data, revisionSchema);
		if (!revisionForm.valid) return fail(400, { revisionForm });
		const res = await attempt(revisionForm, () => createRevision(db, user, revisionForm.data));
		if (!res.ok) return fail(res.failure.status, { revisionForm: res.failure.data.form });
		redirect(303, `/curate/revisions/${res.value.id}`);
	},
	retire: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const retireForm = await validate(event.request, retireSchema);
		if (!retireForm.valid) return fail(400, { retireForm });
		const { reason } = retireForm.data;
		await orHttpError(() => setConverterRetired(db, user, id, true, reason || undefined));
		redirect(303, `/curate/converters/${id}`);
	},
	restore: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		await orHttpError(() => setConverterRetired(db, user, id, false));
		redirect(303, `/curate/converters/${id}`);
	}
};
