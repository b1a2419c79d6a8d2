/**
 * DELETE /api/v1/watches/:id -> 204. 404 (problem details) when the watch is not the member's
 * (or gone), 401 for visitors; an id that is not a PostgreSQL integer never matches the route.
 */
import { problem } from '$lib/server/http/problem';
import { watchPath } from '$lib/server/api/contract';
import { requireApiRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { deleteWatch } from '$lib/server/alerts/watches';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const user = requireApiRole(event, 'member');
	const id = watchPath.safeParse(event.params);
	if (!id.success) return problem(400, 'A watch id is a positive whole number.');
	const deleted = await deleteWatch(db, user.id, id.data.id);
	if (!deleted) return problem(404, 'No such watch among yours.');
	return new Response(null, { status: 204 });
};
