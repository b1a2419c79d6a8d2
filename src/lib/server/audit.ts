/**
 * The audit log: every curator and admin change records who, when, what, before and after.
 * Call inside the same transaction as the change so the two land together or not at all;
 * `auditedUpdate` does the whole lock-update-log step for an edit of one row.
 */
import { eq, type InferInsertModel, type InferSelectModel } from 'drizzle-orm';
import type { AnyPgColumn, PgTable } from 'drizzle-orm/pg-core';
import type { Db } from './db/client';
import { FieldError, pick, type Actor, type Database } from './curate/common';
import { auditLog, type chips } from './db/schema';

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

/** A table whose rows have an `id` column (an integer, or the Auth.js `user` table's text id). */
type TableWithId = PgTable & { id: AnyPgColumn };

export interface AuditedUpdate<T extends TableWithId> {
	table: T;
	/** Audit entity name; also names the row in the 404 ("That shop does not exist."). */
	entity: string;
	id: number | string;
	/** The 404 message when the row is not there; default "That <entity> does not exist." */
	notFound?: string;
	/** The columns snapshotted before and after. */
	fields: readonly (keyof InferSelectModel<T>)[];
	/** The new values, from the locked row; may throw a FieldError to refuse the change. */
	set: (before: InferSelectModel<T>) => Partial<InferInsertModel<T>>;
	/** Past-tense verb for the log, default 'updated'; a function can read the change. */
	action?: string | ((before: InferSelectModel<T>, after: InferSelectModel<T>) => string);
	reason?: string | null;
}

/**
 * The audited update, written once: in one transaction, lock the row (404 FieldError when it is
 * not there), update it, and log the chosen fields before and after. Returns the updated row.
 */
export async function auditedUpdate<T extends TableWithId>(
	db: Database,
	actor: Actor,
	spec: AuditedUpdate<T>
): Promise<InferSelectModel<T>> {
	type Row = InferSelectModel<T>;
	// Drizzle cannot type queries over a generic table; every table here has an id column, as chips do.
	const table = spec.table as unknown as typeof chips;
	const id = spec.id as number;
	return db.transaction(async (tx) => {
		const [locked] = await tx.select().from(table).where(eq(table.id, id)).for('update');
		if (!locked) throw new FieldError(null, spec.notFound ?? `That ${spec.entity} does not exist.`, 404);
		const before = locked as unknown as Row;
		const [updated] = await tx
			.update(table)
			.set(spec.set(before) as never)
			.where(eq(table.id, id))
			.returning();
		const after = updated as unknown as Row;
		const action = typeof spec.action === 'function' ? spec.action(before, after) : (spec.action ?? 'updated');
		await audit(tx, {
			actorId: actor.id,
			action,
			entity: spec.entity,
			entityId: spec.id,
			before: pick(before, spec.fields),
			after: pick(after, spec.fields),
			reason: spec.reason
		});
		return after;
	});
}
