import { fail, redirect } from '@sveltejs/kit';
import { changeRole, listUsers, roleCounts } from '$lib/server/admin';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { attempt, validate } from '$lib/server/curate/forms';
import { roleChangeSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const me = requireRole(event, 'admin');
	const q = (event.url.searchParams.get('q') ?? '').trim().slice(0, 100);
	const [byRole, people] = await Promise.all([roleCounts(db), listUsers(db, q)]);
	return { byRole, people, q, meId: me.id };
};

export const actions: Actions = {
	role: async (event) => {
		const me = requireRole(event, 'admin');
		const form = await validate(event.request, roleChangeSchema);
		const fail400 = (message: string, status = 400) =>
			fail(status, { role: { userId: form.data.userId, message, reason: form.data.reason, role: form.data.role } });
		if (!form.valid) return fail400((Object.values(form.errors).flat()[0] as string) ?? 'Check the form.');
		const res = await attempt(form, () => changeRole(db, me, form.data));
		if (!res.ok) {
			const f = res.failure.data.form;
			const msg =
				(f.message as { text?: string } | undefined)?.text ?? (Object.values(f.errors ?? {}).flat()[0] as string);
			return fail400(msg ?? 'The role was not changed.', res.failure.status);
		}
		redirect(303, `/admin?changed=${encodeURIComponent(res.value.email ?? '')}`);
	}
};
