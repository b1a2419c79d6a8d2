/**
 * Guides: curator-written pages in markdown, with picks from the catalogue. The public
 * /guides/[slug] page belongs to the public guide; this module is the editor's side. Both
 * render through $lib/server/markdown (marked, then sanitize-html).
 */
import { asc, desc, eq, sql } from 'drizzle-orm';
import type { z } from 'zod';
import { audit, auditedUpdate } from '../audit';
import * as t from '../db/schema';
import { FieldError, isUniqueViolation, pick, slugify, type Actor, type Database } from './common';
import type { guidePickSchema, guideSchema } from './schemas';

/** The editor preview uses the public pages' renderer, so what a curator sees is what readers get. */
export { renderMarkdown as renderGuideMarkdown } from '../markdown';

const GUIDE_FIELDS = ['slug', 'title', 'summary', 'bodyMarkdown', 'status', 'publishedAt'] as const;

export async function listGuides(db: Database) {
	return db
		.select({
			id: t.guides.id,
			slug: t.guides.slug,
			title: t.guides.title,
			status: t.guides.status,
			publishedAt: t.guides.publishedAt,
			updatedAt: t.guides.updatedAt,
			picks: sql<number>`(select count(*)::int from ${t.guidePicks} where ${t.guidePicks.guideId} = ${t.guides.id})`
		})
		.from(t.guides)
		.orderBy(desc(t.guides.updatedAt));
}

export async function getGuide(db: Database, id: number) {
	const [guide] = await db.select().from(t.guides).where(eq(t.guides.id, id));
	if (!guide) return null;
	const picks = await db
		.select({
			converterId: t.guidePicks.converterId,
			position: t.guidePicks.position,
			note: t.guidePicks.note,
			bandAtPick: t.guidePicks.bandAtPick,
			label: sql<string>`${t.converters.brand} || ' ' || ${t.converters.model}`,
			slug: t.converters.slug
		})
		.from(t.guidePicks)
		.innerJoin(t.converters, eq(t.converters.id, t.guidePicks.converterId))
		.where(eq(t.guidePicks.guideId, id))
		.orderBy(asc(t.guidePicks.position), asc(t.converters.brand));
	return { guide, picks };
}

export async function createGuide(db: Database, actor: Actor, input: z.infer<typeof guideSchema>) {
	const slug = input.slug || slugify(input.title);
	if (!slug) throw new FieldError('slug', 'Type a slug (letters and digits).');
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(t.guides)
				.values({
					slug,
					title: input.title,
					summary: input.summary,
					bodyMarkdown: input.bodyMarkdown,
					authorId: actor.id
				})
				.returning();
			await audit(tx, {
				actorId: actor.id,
				action: 'created',
				entity: 'guide',
				entityId: row.id,
				after: pick(row, GUIDE_FIELDS)
			});
			return row;
		});
	} catch (err) {
		if (isUniqueViolation(err)) throw new FieldError('slug', `The slug "${slug}" is taken by another guide.`, 409);
		throw err;
	}
}

/** Edit text; the slug may change only while the guide has never been published (links stay stable). */
export async function updateGuide(db: Database, actor: Actor, id: number, input: z.infer<typeof guideSchema>) {
	try {
		return await auditedUpdate(db, actor, {
			table: t.guides,
			entity: 'guide',
			id,
			fields: GUIDE_FIELDS,
			set: (before) => ({
				slug: input.slug && !before.publishedAt ? input.slug : before.slug,
				title: input.title,
				summary: input.summary,
				bodyMarkdown: input.bodyMarkdown,
				updatedAt: new Date()
			})
		});
	} catch (err) {
		if (isUniqueViolation(err)) throw new FieldError('slug', 'That slug is taken by another guide.', 409);
		throw err;
	}
}

/** Publish, unpublish (back to draft) or retire a guide. */
export async function setGuideStatus(
	db: Database,
	actor: Actor,
	id: number,
	status: 'draft' | 'published' | 'retired'
) {
	const now = new Date();
	return auditedUpdate(db, actor, {
		table: t.guides,
		entity: 'guide',
		id,
		fields: GUIDE_FIELDS,
		set: (before) => {
			if (status === 'published' && before.bodyMarkdown.trim().length === 0)
				throw new FieldError('bodyMarkdown', 'Write the guide before publishing it.');
			return {
				status,
				publishedAt: status === 'published' ? (before.publishedAt ?? now) : before.publishedAt,
				updatedAt: now
			};
		},
		action: status === 'published' ? 'published' : status === 'retired' ? 'retired' : 'unpublished'
	});
}

/** Add or update a pick; the converter's best current band is recorded as band_at_pick. */
export async function savePick(db: Database, actor: Actor, guideId: number, input: z.infer<typeof guidePickSchema>) {
	return db.transaction(async (tx) => {
		const [guide] = await tx.select({ id: t.guides.id }).from(t.guides).where(eq(t.guides.id, guideId));
		if (!guide) throw new FieldError(null, 'That guide does not exist.', 404);
		const [conv] = await tx
			.select({ id: t.converters.id })
			.from(t.converters)
			.where(eq(t.converters.id, input.converterId));
		if (!conv) throw new FieldError('converterId', 'That converter does not exist.');
		// Best band among the converter's live revisions (enum order is best first).
		const [best] = await tx
			.select({ band: t.revisions.band })
			.from(t.revisions)
			.where(
				sql`${t.revisions.converterId} = ${input.converterId} and ${t.revisions.band} is not null and ${t.revisions.retiredAt} is null`
			)
			.orderBy(asc(t.revisions.band))
			.limit(1);
		const [before] = await tx
			.select()
			.from(t.guidePicks)
			.where(sql`${t.guidePicks.guideId} = ${guideId} and ${t.guidePicks.converterId} = ${input.converterId}`);
		const values = {
			guideId,
			converterId: input.converterId,
			position: input.position,
			note: input.note,
			bandAtPick: best?.band ?? null
		};
		const [row] = await tx
			.insert(t.guidePicks)
			.values(values)
			.onConflictDoUpdate({
				target: [t.guidePicks.guideId, t.guidePicks.converterId],
				set: { position: values.position, note: values.note, bandAtPick: values.bandAtPick }
			})
			.returning();
		await audit(tx, {
			actorId: actor.id,
			action: before ? 'pick-updated' : 'pick-added',
			entity: 'guide',
			entityId: guideId,
			before: before ?? undefined,
			after: row
		});
		return row;
	});
}

export async function removePick(db: Database, actor: Actor, guideId: number, converterId: number) {
	return db.transaction(async (tx) => {
		const [before] = await tx
			.delete(t.guidePicks)
			.where(sql`${t.guidePicks.guideId} = ${guideId} and ${t.guidePicks.converterId} = ${converterId}`)
			.returning();
		if (!before) throw new FieldError(null, 'That pick is not on this guide.', 404);
		await audit(tx, { actorId: actor.id, action: 'pick-removed', entity: 'guide', entityId: guideId, before });
	});
}
