/**
 * Teardown reports: a member opened a unit bought at a shop in a month and found a chip.
 * Anyone signed in may submit one (with a board photo); curators verify or reject it with
 * a reason. Verified reports feed the revision odds, so they are queryable by converter,
 * revision and shop.
 */
import { and, desc, eq, sql, type SQL } from 'drizzle-orm';
import type { z } from 'zod';
import { audit } from '../audit';
import * as t from '../db/schema';
import { preparedFor } from '../db/prepared';
import { FieldError, type Actor, type Database } from './common';
import type { Db } from '../db/client';
import type { teardownReviewSchema, teardownSchema } from './schemas';
import { ownFile, setFilesStatus } from './uploads';

type TeardownInput = z.infer<typeof teardownSchema>;

/** Store a member's report as pending. The photo (if any) must be their own upload. */
export async function submitTeardown(db: Database, actor: Actor, input: TeardownInput) {
	return db.transaction(async (tx) => {
		const [conv] = await tx
			.select({ id: t.converters.id })
			.from(t.converters)
			.where(eq(t.converters.id, input.converterId));
		if (!conv) throw new FieldError('converterId', 'That converter does not exist.');
		if (input.revisionId !== undefined) {
			const [rev] = await tx
				.select({ converterId: t.revisions.converterId })
				.from(t.revisions)
				.where(eq(t.revisions.id, input.revisionId));
			if (!rev || rev.converterId !== input.converterId)
				throw new FieldError('revisionId', 'That revision belongs to another converter.');
		}
		if (input.photoFileId) await ownFile(tx, actor, input.photoFileId, 'photo');
		const [row] = await tx
			.insert(t.teardownReports)
			.values({
				converterId: input.converterId,
				revisionId: input.revisionId ?? null,
				shopId: input.shopId ?? null,
				shopNameOther: input.shopId ? null : input.shopNameOther || null,
				purchaseMonth: `${input.purchaseMonth}-01`,
				chipId: input.chipId ?? null,
				chipText: input.chipText,
				boardMarking: input.boardMarking,
				photoFileId: input.photoFileId || null,
				notes: input.notes,
				submittedById: actor.id
			})
			.returning();
		await audit(tx, {
			actorId: actor.id,
			action: 'submitted',
			entity: 'teardown_report',
			entityId: row.id,
			after: row
		});
		return row;
	});
}

/**
 * Verify or reject a pending report with a reason. A curator may correct the revision or
 * chip it names while verifying. The photo becomes public only when verified.
 */
export async function reviewTeardown(
	db: Database,
	actor: Actor,
	input: z.infer<typeof teardownReviewSchema>,
	now = new Date()
) {
	return db.transaction(async (tx) => {
		const [before] = await tx.select().from(t.teardownReports).where(eq(t.teardownReports.id, input.id)).for('update');
		if (!before) throw new FieldError(null, 'That report does not exist.', 404);
		if (before.status !== 'pending') throw new FieldError(null, `This report was already ${before.status}.`, 409);
		const status = input.decision === 'verify' ? 'verified' : 'rejected';
		const [row] = await tx
			.update(t.teardownReports)
			.set({
				status,
				reviewReason: input.reason,
				reviewedById: actor.id,
				reviewedAt: now,
				...(status === 'verified' && input.revisionId !== undefined ? { revisionId: input.revisionId } : {}),
				...(status === 'verified' && input.chipId !== undefined ? { chipId: input.chipId } : {})
			})
			.where(eq(t.teardownReports.id, input.id))
			.returning();
		await setFilesStatus(tx, [before.photoFileId], status === 'verified' ? 'public' : 'rejected');
		await audit(tx, {
			actorId: actor.id,
			action: status,
			entity: 'teardown_report',
			entityId: input.id,
			before,
			after: row,
			reason: input.reason
		});
		return row;
	});
}

const reportColumns = {
	id: t.teardownReports.id,
	converterId: t.teardownReports.converterId,
	converter: t.converters.model,
	brand: t.converters.brand,
	revisionId: t.teardownReports.revisionId,
	revision: t.revisions.code,
	shopId: t.teardownReports.shopId,
	shopSlug: t.shops.slug,
	shop: t.shops.name,
	shopNameOther: t.teardownReports.shopNameOther,
	purchaseMonth: t.teardownReports.purchaseMonth,
	chipId: t.teardownReports.chipId,
	chip: t.chips.name,
	chipText: t.teardownReports.chipText,
	boardMarking: t.teardownReports.boardMarking,
	photoFileId: t.teardownReports.photoFileId,
	thumbnailId: t.files.thumbnailId,
	notes: t.teardownReports.notes,
	status: t.teardownReports.status,
	reviewReason: t.teardownReports.reviewReason,
	createdAt: t.teardownReports.createdAt,
	reviewedAt: t.teardownReports.reviewedAt
};

function reports(db: Db, where: SQL | undefined, order: SQL[] = [desc(t.teardownReports.createdAt)]) {
	return db
		.select(reportColumns)
		.from(t.teardownReports)
		.innerJoin(t.converters, eq(t.converters.id, t.teardownReports.converterId))
		.leftJoin(t.revisions, eq(t.revisions.id, t.teardownReports.revisionId))
		.leftJoin(t.shops, eq(t.shops.id, t.teardownReports.shopId))
		.leftJoin(t.chips, eq(t.chips.id, t.teardownReports.chipId))
		.leftJoin(t.files, eq(t.files.id, t.teardownReports.photoFileId))
		.where(where)
		.orderBy(...order);
}

/** Reports waiting for a curator, oldest first. */
export async function pendingTeardowns(db: Database) {
	return (await reports(db, eq(t.teardownReports.status, 'pending'))).reverse();
}

/** One member's own reports, newest first. */
export function teardownsBy(db: Database, userId: string) {
	return reports(db, eq(t.teardownReports.submittedById, userId));
}

/**
 * Verified reports, optionally for one converter, revision or shop, newest purchase first:
 * the one source of the teardowns a converter page lists and of its revision odds.
 */
export async function verifiedTeardowns(
	db: Db,
	filter: { converterId?: number; revisionId?: number; shopId?: number } = {}
) {
	const newestFirst = [desc(t.teardownReports.purchaseMonth), desc(t.teardownReports.id)];
	// one converter's (its page): built once
	if (filter.converterId !== undefined && filter.revisionId === undefined && filter.shopId === undefined)
		return preparedFor(db, 'verified_teardowns_of', () =>
			reports(
				db,
				and(
					eq(t.teardownReports.status, 'verified'),
					eq(t.teardownReports.converterId, sql.placeholder('converterId'))
				),
				newestFirst
			).prepare('verified_teardowns_of')
		).execute({ converterId: filter.converterId });
	const conds: SQL[] = [eq(t.teardownReports.status, 'verified')];
	if (filter.converterId !== undefined) conds.push(eq(t.teardownReports.converterId, filter.converterId));
	if (filter.revisionId !== undefined) conds.push(eq(t.teardownReports.revisionId, filter.revisionId));
	if (filter.shopId !== undefined) conds.push(eq(t.teardownReports.shopId, filter.shopId));
	return reports(db, and(...conds), newestFirst);
}
