/**
 * Admin changes: people's roles, shops, exchange rates. Each is audited in its own
 * transaction. An admin cannot take away their own admin role (someone else must), so a
 * site never ends up with nobody able to grant roles by accident. Free of `$env`/`$app` (like
 * src/lib/server/curate/), so integration tests call it directly; the /admin routes only parse,
 * guard and call these.
 */
import { asc, count, desc, eq, ilike, or, sql } from 'drizzle-orm';
import type { z } from 'zod';
import { audit, auditedUpdate } from '../audit';
import * as t from '../db/schema';
import { refreshCards } from '../queries/read-model';
import { FieldError, isUniqueViolation, pick, slugify, type Actor, type Database } from '../curate/common';
import type { rateSchema, roleChangeSchema, shopSchema } from '../curate/schemas';

/** How many people hold each role. */
export async function roleCounts(db: Database) {
	return db.select({ role: t.users.role, n: count() }).from(t.users).groupBy(t.users.role);
}

export async function listUsers(db: Database, q = '', limit = 100) {
	const where = q ? or(ilike(t.users.email, `%${q}%`), ilike(t.users.name, `%${q}%`)) : undefined;
	return db
		.select({
			id: t.users.id,
			email: t.users.email,
			name: t.users.name,
			role: t.users.role,
			createdAt: t.users.createdAt
		})
		.from(t.users)
		.where(where)
		.orderBy(sql`case ${t.users.role} when 'admin' then 0 when 'curator' then 1 else 2 end`, asc(t.users.email))
		.limit(limit);
}

/** Change someone's role, with a reason for the log. */
export async function changeRole(db: Database, actor: Actor, input: z.infer<typeof roleChangeSchema>) {
	if (actor.role !== 'admin') throw new FieldError(null, 'Only an admin can change roles.', 403);
	if (input.userId === actor.id && input.role !== 'admin')
		throw new FieldError('role', 'You cannot remove your own admin role; ask another admin.', 403);
	return auditedUpdate(db, actor, {
		table: t.users,
		entity: 'user',
		id: input.userId,
		notFound: 'That person does not exist.',
		fields: ['email', 'role'],
		action: 'role-changed',
		reason: input.reason,
		set: (before) => {
			if (before.role === input.role)
				throw new FieldError('role', `${before.email} already has the ${input.role} role.`);
			return { role: input.role };
		}
	});
}

const SHOP_FIELDS = [
	'slug',
	'name',
	'region',
	'currency',
	'shipsTo',
	'baseUrl',
	'defaultFormat',
	'feedConfig',
	'maxConcurrency',
	'minSpacingMs',
	'active'
] as const;

function shopValues(input: z.infer<typeof shopSchema>) {
	return {
		name: input.name,
		region: input.region,
		currency: input.currency,
		shipsTo: input.shipsTo,
		baseUrl: new URL(input.baseUrl).origin,
		defaultFormat: input.defaultFormat,
		feedConfig: input.feedConfig ? JSON.parse(input.feedConfig) : {},
		maxConcurrency: input.maxConcurrency,
		minSpacingMs: input.minSpacingMs,
		active: input.active
	};
}

export async function shopById(db: Database, id: number) {
	const [shop] = await db.select().from(t.shops).where(eq(t.shops.id, id));
	return shop ?? null;
}

export async function listShops(db: Database) {
	return db.select().from(t.shops).orderBy(asc(t.shops.name));
}

export async function createShop(db: Database, actor: Actor, input: z.infer<typeof shopSchema>) {
	const slug = input.slug || slugify(input.name);
	if (!slug) throw new FieldError('slug', 'Type a slug (letters and digits).');
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(t.shops)
				.values({ slug, ...shopValues(input) })
				.returning();
			await audit(tx, {
				actorId: actor.id,
				action: 'created',
				entity: 'shop',
				entityId: row.id,
				after: pick(row, SHOP_FIELDS)
			});
			return row;
		});
	} catch (err) {
		if (isUniqueViolation(err)) throw new FieldError('slug', `The slug "${slug}" is taken by another shop.`, 409);
		throw err;
	}
}

/** Edit a shop (slug unchanged). */
export async function updateShop(db: Database, actor: Actor, id: number, input: z.infer<typeof shopSchema>) {
	return auditedUpdate(db, actor, {
		table: t.shops,
		entity: 'shop',
		id,
		fields: SHOP_FIELDS,
		set: () => ({ ...shopValues(input), updatedAt: new Date() })
	});
}

export async function listRates(db: Database, limit = 100) {
	return db
		.select()
		.from(t.exchangeRates)
		.orderBy(desc(t.exchangeRates.day), asc(t.exchangeRates.base), asc(t.exchangeRates.quote))
		.limit(limit);
}

/** Add (or correct) the rate for one currency pair on one day. */
export async function addRate(db: Database, actor: Actor, input: z.infer<typeof rateSchema>) {
	return db.transaction(async (tx) => {
		const [before] = await tx
			.select()
			.from(t.exchangeRates)
			.where(
				sql`${t.exchangeRates.base} = ${input.base} and ${t.exchangeRates.quote} = ${input.quote} and ${t.exchangeRates.day} = ${input.day}`
			);
		const [row] = await tx
			.insert(t.exchangeRates)
			.values({ base: input.base, quote: input.quote, day: input.day, rate: String(input.rate), source: 'manual' })
			.onConflictDoUpdate({
				target: [t.exchangeRates.base, t.exchangeRates.quote, t.exchangeRates.day],
				set: { rate: String(input.rate), source: 'manual' }
			})
			.returning();
		await audit(tx, {
			actorId: actor.id,
			action: before ? 'updated' : 'created',
			entity: 'exchange_rate',
			entityId: `${row.base}/${row.quote}/${row.day}`,
			before: before ?? undefined,
			after: row
		});
		// A rate can change which offer is cheapest anywhere: every public card, in this transaction.
		await refreshCards(tx, 'all');
		return row;
	});
}
