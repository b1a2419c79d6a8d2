/**
 * The audit log: every curator and admin change records who, when, what, before and after.
 * Call inside the same transaction as the change so the two land together or not at all.
 */
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import { auditLog } from './db/schema';
import type * as schema from './db/schema';

// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Db = PgDatabase<PgQueryResultHKT, typeof schema, any>;

export interface AuditEntry {
	actorId: string | null;
	/** Verb in the past tense, e.g. 'created', 'updated', 'retired', 'verified', 'role-changed'. */
	action: string;
	/** Table-like entity name, e.g. 'converter', 'bench_run', 'user'. */
	entity: string;
	entityId: string | number;
	before?: unknown;
	after?: unknown;
	reason?: string | null;
}

export async function audit(db: Db, entry: AuditEntry) {
	await db.insert(auditLog).values({
		actorId: entry.actorId,
		action: entry.action,
		entity: entry.entity,
		entityId: String(entry.entityId),
		before: entry.before === undefined ? null : toJson(entry.before),
		after: entry.after === undefined ? null : toJson(entry.after),
		reason: entry.reason ?? null
	});
}

/** Dates and bigints survive as strings; the log stores plain JSON. */
function toJson(value: unknown) {
	return JSON.parse(JSON.stringify(value, (_k, v) => (typeof v === 'bigint' ? v.toString() : v)));
}
