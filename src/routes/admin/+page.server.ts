import { redirect } from '@sveltejs/kit';
import { changeRole, listUsers, roleCounts } from '$lib/server/admin';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
import { roleChangeSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const me = requireRole(event, 'admin');
	const q = (event.url.searchParams.get('q') ?? '').trim().slice(0, 100);
	const [byRole, people] = await Promise.all([roleCounts(db), listUsers(db, q)]);
	// One role form per person, told apart by id so an answer lands on its own row.
	const roleForms = await Promise.all(
		people.map((p) => emptyForm(roleChangeSchema, { userId: p.id, role: p.role, reason: '' }, `role-${p.id}`))
	);
	return { byRole, people: people.map((p, i) => ({ ...p, roleForm: roleForms[i] })), q, meId: me.id };
};

export const actions: Actions = {
	role: async (event) => {
		const me = requireRole(event, 'admin');
		const form = await validate(event.request, roleChangeSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => changeRole(db, me, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/admin?changed=${encodeURIComponent(res.value.email ?? '')}`);
	}
};
