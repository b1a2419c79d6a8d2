import { z } from 'zod';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { browseAudit } from '$lib/server/curate/audit-log';
import type { PageServerLoad } from './$types';

const query = z.object({
	entity: z
		.string()
		.trim()
		.max(60)
		.regex(/^[a-z_]*$/)
		.catch(''),
	id: z.string().trim().max(80).catch(''),
	actor: z.string().trim().max(120).catch(''),
	page: z.coerce.number().int().min(1).max(100000).catch(1)
});

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const q = query.parse(Object.fromEntries(event.url.searchParams));
	const result = await browseAudit(db, {
		entity: q.entity || undefined,
		entityId: q.id || undefined,
		actor: q.actor || undefined,
		page: q.page
	});
	return { ...result, q };
};
