/** /admin/alerts: dead and waiting alert e-mails with their last error, for admins. */
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { outboxOverview } from '$lib/server/alerts/sender';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin');
	const { rows, counts } = await outboxOverview(db, 200);
	return {
		counts,
		rows: rows.map((r) => ({
			id: Number(r.id),
			status: r.status,
			mode: r.mode,
			attempts: r.attempts,
			nextAttemptAt: new Date(r.next_attempt_at).toISOString(),
			createdAt: new Date(r.created_at).toISOString(),
			lastError: r.last_error,
			email: r.email,
			what: `${r.kind === 'restock' ? 'Restock' : 'Price drop'}: ${r.converter} at ${r.shop}`
		}))
	};
};
