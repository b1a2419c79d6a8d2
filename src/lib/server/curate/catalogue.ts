/**
 * Converters, chips and revisions: create, edit, retire. Every change writes an audit row
 * in the same transaction. Slugs are chosen once (typed, or made from the name) and never
 * change on edit, so public links stay stable.
 */
import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import type { z } from 'zod';
import { audit, auditedUpdate } from '../audit';
import * as t from '../db/schema';
import { refreshExpectedForChips } from '../expected';
import { FieldError, isUniqueViolation, pick, slugify, type Actor, type Database } from './common';
import type { chipSchema, converterSchema, revisionSchema } from './schemas';

type ChipInput = z.infer<typeof chipSchema>;
type ConverterInput = z.infer<typeof converterSchema>;
type RevisionInput = z.infer<typeof revisionSchema>;

const CHIP_FIELDS = ['slug', 'name', 'maker', 'notes', 'retiredAt'] as const;
const CONVERTER_FIELDS = ['slug', 'brand', 'model', 'summary', 'hasAudioOut', 'power', 'outputs', 'retiredAt'] as const;
const REVISION_FIELDS = [
	'converterId',
	'code',
	'chipId',
	'boardMarking',
	'seenFrom',
	'seenTo',
	'notes',
	'retiredAt'
] as const;

function chosenSlug(typed: string, from: string, field = 'slug') {
	const slug = typed || slugify(from);
	if (!slug) throw new FieldError(field, 'Could not make a slug from the name: type one (letters and digits).');
	return slug;
}

/** The three catalogue tables that can be retired; each has `id`, `retiredAt` and `updatedAt`. */
const RETIRABLE = {
	chip: { table: t.chips, fields: CHIP_FIELDS },
	converter: { table: t.converters, fields: CONVERTER_FIELDS },
	revision: { table: t.revisions, fields: REVISION_FIELDS }
} as const;

/**
 * Retire (or bring back) one row and audit it in the same transaction. Retiring keeps the
 * first retirement date; nothing is ever deleted, so old links and history stay whole.
 */
async function setRetired(
	db: Database,
	actor: Actor,
	entity: keyof typeof RETIRABLE,
	id: number,
	retired: boolean,
	reason?: string
) {
	// One code path for three tables: Drizzle cannot type a union of tables, so use the chip
	// table's shape (all three share id, retiredAt and updatedAt).
	const { table, fields } = RETIRABLE[entity] as unknown as {
		table: typeof t.chips;
		fields: readonly (keyof typeof t.chips.$inferSelect)[];
	};
	const now = new Date();
	return auditedUpdate(db, actor, {
		table,
		entity,
		id,
		fields,
		set: (before) => ({ retiredAt: retired ? (before.retiredAt ?? now) : null, updatedAt: now }),
		action: retired ? 'retired' : 'restored',
		reason
	});
}

// ------------------------------------------------------------------ chips

export async function listChips(db: Database) {
	return db.select().from(t.chips).orderBy(asc(t.chips.retiredAt), asc(t.chips.name));
}

/** Create a chip; the slug must be unused. */
export async function createChip(db: Database, actor: Actor, input: ChipInput) {
	const slug = chosenSlug(input.slug, `${input.maker.replace(/\(.*\)/, '')} ${input.name}`);
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(t.chips)
				.values({ slug, name: input.name, maker: input.maker, notes: input.notes })
				.returning();
			await audit(tx, {
				actorId: actor.id,
				action: 'created',
				entity: 'chip',
				entityId: row.id,
				after: pick(row, CHIP_FIELDS)
			});
			return row;
		});
	} catch (err) {
		if (isUniqueViolation(err)) throw new FieldError('slug', `The slug "${slug}" is taken by another chip.`, 409);
		throw err;
	}
}

/** Edit a chip's name, maker and notes. The slug stays. */
export async function updateChip(db: Database, actor: Actor, id: number, input: ChipInput) {
	return auditedUpdate(db, actor, {
		table: t.chips,
		entity: 'chip',
		id,
		fields: CHIP_FIELDS,
		set: () => ({ name: input.name, maker: input.maker, notes: input.notes, updatedAt: new Date() })
	});
}

/** Retire (or bring back) a chip. Retired chips stay linked to old revisions. */
export async function setChipRetired(db: Database, actor: Actor, id: number, retired: boolean, reason?: string) {
	return (await setRetired(db, actor, 'chip', id, retired, reason)) as unknown as typeof t.chips.$inferSelect;
}

// ------------------------------------------------------------------ converters

export async function listConvertersForCurators(db: Database) {
	return db
		.select({
			id: t.converters.id,
			slug: t.converters.slug,
			brand: t.converters.brand,
			model: t.converters.model,
			retiredAt: t.converters.retiredAt,
			lastReviewedAt: t.converters.lastReviewedAt,
			revisions: sql<number>`(select count(*)::int from ${t.revisions} where ${t.revisions.converterId} = ${t.converters.id})`
		})
		.from(t.converters)
		.orderBy(asc(t.converters.retiredAt), asc(t.converters.brand), asc(t.converters.model));
}

export async function getConverter(db: Database, id: number) {
	const [row] = await db.select().from(t.converters).where(eq(t.converters.id, id));
	return row ?? null;
}

function converterConflict(err: unknown, slug: string): never {
	if (isUniqueViolation(err, 'converter_brand_model_uq'))
		throw new FieldError('model', 'This brand already has a converter with that model name.', 409);
	if (isUniqueViolation(err)) throw new FieldError('slug', `The slug "${slug}" is taken by another converter.`, 409);
	throw err;
}

/** Create a converter. The slug is typed or made from brand and model, and must be unused. */
export async function createConverter(db: Database, actor: Actor, input: ConverterInput, now = new Date()) {
	const slug = chosenSlug(input.slug, `${input.brand} ${input.model}`);
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(t.converters)
				.values({
					slug,
					brand: input.brand,
					model: input.model,
					summary: input.summary,
					hasAudioOut: input.hasAudioOut,
					power: input.power,
					outputs: input.outputs,
					lastReviewedAt: now
				})
				.returning();
			await audit(tx, {
				actorId: actor.id,
				action: 'created',
				entity: 'converter',
				entityId: row.id,
				after: pick(row, CONVERTER_FIELDS)
			});
			return row;
		});
	} catch (err) {
		converterConflict(err, slug);
	}
}

/** Edit a converter (slug unchanged) and mark it reviewed now. */
export async function updateConverter(db: Database, actor: Actor, id: number, input: ConverterInput, now = new Date()) {
	try {
		return await auditedUpdate(db, actor, {
			table: t.converters,
			entity: 'converter',
			id,
			fields: CONVERTER_FIELDS,
			set: () => ({
				brand: input.brand,
				model: input.model,
				summary: input.summary,
				hasAudioOut: input.hasAudioOut,
				power: input.power,
				outputs: input.outputs,
				lastReviewedAt: now,
				updatedAt: now
			})
		});
	} catch (err) {
		if (err instanceof FieldError) throw err;
		converterConflict(err, '');
	}
}

export async function setConverterRetired(db: Database, actor: Actor, id: number, retired: boolean, reason?: string) {
	return (await setRetired(db, actor, 'converter', id, retired, reason)) as unknown as typeof t.converters.$inferSelect;
}

// ------------------------------------------------------------------ revisions

export async function listRevisions(db: Database, converterId: number) {
	return db
		.select({
			id: t.revisions.id,
			code: t.revisions.code,
			chip: t.chips.name,
			chipId: t.revisions.chipId,
			boardMarking: t.revisions.boardMarking,
			seenFrom: t.revisions.seenFrom,
			seenTo: t.revisions.seenTo,
			band: t.revisions.band,
			score: t.revisions.score,
			scoreMin: t.revisions.scoreMin,
			scoreMax: t.revisions.scoreMax,
			deviationIre: t.revisions.deviationIre,
			bandReason: t.revisions.bandReason,
			runCount: t.revisions.runCount,
			retiredAt: t.revisions.retiredAt
		})
		.from(t.revisions)
		.innerJoin(t.chips, eq(t.chips.id, t.revisions.chipId))
		.where(eq(t.revisions.converterId, converterId))
		.orderBy(asc(t.revisions.seenFrom), asc(t.revisions.code));
}

export async function getRevision(db: Database, id: number) {
	const [row] = await db
		.select({
			revision: t.revisions,
			chip: t.chips,
			converter: { id: t.converters.id, slug: t.converters.slug, brand: t.converters.brand, model: t.converters.model }
		})
		.from(t.revisions)
		.innerJoin(t.chips, eq(t.chips.id, t.revisions.chipId))
		.innerJoin(t.converters, eq(t.converters.id, t.revisions.converterId))
		.where(eq(t.revisions.id, id));
	return row ?? null;
}

async function assertRevisionRefs(db: Database, input: RevisionInput) {
	const [conv] = await db
		.select({ id: t.converters.id })
		.from(t.converters)
		.where(eq(t.converters.id, input.converterId));
	if (!conv) throw new FieldError('converterId', 'That converter does not exist.');
	const [chip] = await db
		.select({ id: t.chips.id, retiredAt: t.chips.retiredAt })
		.from(t.chips)
		.where(eq(t.chips.id, input.chipId));
	if (!chip) throw new FieldError('chipId', 'That chip does not exist.');
}

function revisionValues(input: RevisionInput) {
	return {
		code: input.code,
		chipId: input.chipId,
		boardMarking: input.boardMarking,
		seenFrom: input.seenFrom || null,
		seenTo: input.seenTo || null,
		notes: input.notes
	};
}

/** Add a revision: a converter seen with one chip and board marking over a date range. */
export async function createRevision(db: Database, actor: Actor, input: RevisionInput) {
	await assertRevisionRefs(db, input);
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(t.revisions)
				.values({ converterId: input.converterId, ...revisionValues(input) })
				.returning();
			await audit(tx, {
				actorId: actor.id,
				action: 'created',
				entity: 'revision',
				entityId: row.id,
				after: pick(row, REVISION_FIELDS)
			});
			await refreshExpectedForChips(tx, [row.chipId]);
			return row;
		});
	} catch (err) {
		if (isUniqueViolation(err))
			throw new FieldError('code', 'This converter already has a revision with that code.', 409);
		throw err;
	}
}

/** Edit a revision (its converter stays). */
export async function updateRevision(db: Database, actor: Actor, id: number, input: RevisionInput) {
	await assertRevisionRefs(db, input);
	try {
		let chipBefore: number | null = null;
		const row = await auditedUpdate(db, actor, {
			table: t.revisions,
			entity: 'revision',
			id,
			fields: REVISION_FIELDS,
			set: (before) => {
				chipBefore = before.chipId;
				return { ...revisionValues(input), updatedAt: new Date() };
			}
		});
		// a chip change moves the revision's expected grade from one chip's evidence to the other's
		await refreshExpectedForChips(db, [chipBefore ?? row.chipId, row.chipId]);
		return row;
	} catch (err) {
		if (isUniqueViolation(err))
			throw new FieldError('code', 'This converter already has a revision with that code.', 409);
		throw err;
	}
}

export async function setRevisionRetired(db: Database, actor: Actor, id: number, retired: boolean, reason?: string) {
	const row = (await setRetired(
		db,
		actor,
		'revision',
		id,
		retired,
		reason
	)) as unknown as typeof t.revisions.$inferSelect;
	await refreshExpectedForChips(db, [row.chipId]);
	return row;
}

/** Options for pickers: live converters, chips and revisions. */
export async function catalogueOptions(db: Database) {
	const [convs, chipRows, revs] = await Promise.all([
		db
			.select({ id: t.converters.id, label: sql<string>`${t.converters.brand} || ' ' || ${t.converters.model}` })
			.from(t.converters)
			.where(isNull(t.converters.retiredAt))
			.orderBy(asc(t.converters.brand), asc(t.converters.model)),
		db
			.select({ id: t.chips.id, label: sql<string>`${t.chips.name} || ' (' || ${t.chips.maker} || ')'` })
			.from(t.chips)
			.where(isNull(t.chips.retiredAt))
			.orderBy(asc(t.chips.name)),
		db
			.select({
				id: t.revisions.id,
				converterId: t.revisions.converterId,
				label: sql<string>`${t.converters.brand} || ' ' || ${t.converters.model} || ' · ' || ${t.revisions.code} || ' (' || ${t.chips.name} || ')'`
			})
			.from(t.revisions)
			.innerJoin(t.converters, eq(t.converters.id, t.revisions.converterId))
			.innerJoin(t.chips, eq(t.chips.id, t.revisions.chipId))
			.where(and(isNull(t.revisions.retiredAt), isNull(t.converters.retiredAt)))
			.orderBy(asc(t.converters.brand), asc(t.converters.model), asc(t.revisions.code))
	]);
	return { converters: convs, chips: chipRows, revisions: revs };
}
