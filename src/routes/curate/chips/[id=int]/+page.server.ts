import { error, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { requireRole } from '$lib/server/auth/guard';
import { db, tables as t } from '$lib/server/db';
import { setChipRetired, updateChip } from '$lib/server/curate/catalogue';
import { attempt, emptyForm, idParam, invalid, validate, orHttpError } from '$lib/server/curate/forms';
import { chipSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const id = idParam(event.params.id);
	const [chip] = await db.select().from(t.chips).where(eq(t.chips.id, id));
	if (!chip) error(404, 'No such chip.');
	return {
		chip,
		form: await emptyForm(chipSchema, { name: chip.name, maker: chip.maker, slug: chip.slug, notes: chip.notes })
	};
};

export const actions: Actions = {
	update: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const form = await validate(event.request, chipSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => updateChip(db, user, id, form.data));
		if (!res.ok) return res.failure;
		redirect(303, '/curate/chips');
	},
	retire: async (event) => {
		const user = requireRole(event, 'curator');
		await orHttpError(() => setChipRetired(db, user, idParam(event.params.id), true));
		redirect(303, `/curate/chips/${event.params.id}`);
	},
	restore: async (event) => {
		const user = requireRole(event, 'curator');
		await orHttpError(() => setChipRetired(db, user, idParam(event.params.id), false));
		redirect(303, `/curate/chips/${event.params.id}`);
	}
};
