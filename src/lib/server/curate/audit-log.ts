/** Reading the audit log: newest first, filtered by entity and actor, a page at a time. */
import { and, count, desc, eq, ilike, type SQL } from 'drizzle-orm';
import * as t from '../db/schema';
import type { Database } from './common';

export const AUDIT_PAGE_SIZE = 50;

export interface AuditFilter {
	entity?: string;
	entityId?: string;
	/** Matches the actor's e-mail (part of it, case-insensitive). */
	actor?: string;
	page?: number;
}

export async function browseAudit(db: Database, filter: AuditFilter = {}) {
	const conds: SQL[] = [];
	if (filter.entity) conds.push(eq(t.auditLog.entity, filter.entity));
	if (filter.entityId) conds.push(eq(t.auditLog.entityId, filter.entityId));
	if (filter.actor) conds.push(ilike(t.users.email, `%${filter.actor.replace(/[%_\\]/g, (c) => '\\' + c)}%`));
	const where = conds.length ? and(...conds) : undefined;
	const page = Math.max(1, Math.floor(filter.page ?? 1));
	const [rows, [{ total }], entities] = await Promise.all([
		db
			.select({
				id: t.auditLog.id,
				at: t.auditLog.at,
				action: t.auditLog.action,
				entity: t.auditLog.entity,
				entityId: t.auditLog.entityId,
				before: t.auditLog.before,
				after: t.auditLog.after,
				reason: t.auditLog.reason,
				actorEmail: t.users.email
			})
			.from(t.auditLog)
			.leftJoin(t.users, eq(t.users.id, t.auditLog.actorId))
			.where(where)
			.orderBy(desc(t.auditLog.at), desc(t.auditLog.id))
			.limit(AUDIT_PAGE_SIZE)
			.offset((page - 1) * AUDIT_PAGE_SIZE),
		db.select({ total: count() }).from(t.auditLog).leftJoin(t.users, eq(t.users.id, t.auditLog.actorId)).where(where),
		db.selectDistinct({ entity: t.auditLog.entity }).from(t.auditLog).orderBy(t.auditLog.entity)
	]);
	return {
		rows,
		total,
		page,
		pages: Math.max(1, Math.ceil(total / AUDIT_PAGE_SIZE)),
		entities: entities.map((e) => e.entity)
	};
}
