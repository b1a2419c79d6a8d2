/**
 * Watches and alert preferences: one zod schema per entity, and the database operations the
 * API, the account page and the unsubscribe flow share. Every operation is scoped to a member.
 */
import { and, asc, eq, inArray, sql } from 'drizzle-orm';
import { z } from 'zod';
import { BANDS } from '../../components/bands';
import { REGION_CODES, toMinor } from '../../pricing';
import { fitsMinorUnits, isKnownCurrencyCode, minorDigits } from '../../money';
import { ALERT_MODES, type AlertMode } from '../../enums';
import * as t from '../db/schema';
import { PG_INT_MAX } from '../http/numbers';
import type { Db } from './db';
import { isTimeZone } from './schedule';

export const bandSchema = z.enum(BANDS, { message: 'Pick a band from the list.' });
const slugSchema = z
	.string({ message: 'Pick a converter.' })
	.trim()
	.regex(/^[a-z0-9]+(-[a-z0-9]+)*$/, { message: 'That is not a converter from our catalogue.' })
	.max(120);

/** POST /api/v1/watches: watch one converter (any revision, or revisions at or above a band). */
export const apiWatchSchema = z.object({
	converterSlug: slugSchema,
	minBand: bandSchema.nullish()
});

/**
 * The watch form on /account/watches: a converter watch or a rule over the catalogue. Plain
 * field types (no preprocessing), as superforms reads them: an empty field is `undefined`
 * for the optional ones, an unticked box `false`.
 */
export const watchFormSchema = z
	.object({
		converterSlug: slugSchema.optional(),
		minBand: bandSchema.optional(),
		maxPrice: z
			.number({ message: 'Enter a price like 25 or 19.90.' })
			.positive({ message: 'A price limit must be above zero.' })
			.max(1_000_000, { message: 'That price limit is too high.' })
			.optional(),
		priceCurrency: z
			.string()
			.trim()
			.toUpperCase()
			.refine(isKnownCurrencyCode, { message: 'Use a three-letter currency code such as EUR.' })
			.optional(),
		region: z.enum(REGION_CODES, { message: 'Pick a region from the list.' }).optional(),
		needsAudio: z.boolean().default(false),
		alsoPriceDrops: z.boolean().default(false),
		/** Let a revision's expected grade (not yet measured) meet the band limit. */
		includeExpected: z.boolean().default(false),
		shopIds: z
			.array(z.number().int().positive().max(PG_INT_MAX, { message: 'One of those shops is not in our list.' }))
			.max(50)
			.default([])
	})
	.superRefine((v, ctx) => {
		if (v.maxPrice !== undefined && !v.priceCurrency) {
			ctx.addIssue({ code: 'custom', path: ['priceCurrency'], message: 'Say which currency the price limit is in.' });
		}
		if (v.maxPrice !== undefined && v.priceCurrency) {
			if (!fitsMinorUnits(v.maxPrice, v.priceCurrency)) {
				ctx.addIssue({
					code: 'custom',
					path: ['maxPrice'],
					message: `${v.priceCurrency} has ${minorDigits(v.priceCurrency)} decimal places.`
				});
			}
		}
		if (!v.converterSlug && !v.minBand && v.maxPrice === undefined) {
			ctx.addIssue({
				code: 'custom',
				path: ['minBand'],
				message: 'A rule over every converter needs a lowest band or a price limit, or pick one converter.'
			});
		}
	});

export type WatchForm = z.infer<typeof watchFormSchema>;

/** The pause / resume and delete buttons of one watch on /account/watches. */
export const watchActionSchema = z.object({
	id: z
		.number({ message: 'That watch id is not valid.' })
		.int('That watch id is not valid.')
		.positive('That watch id is not valid.')
		.max(PG_INT_MAX, 'That watch id is not valid.'),
	paused: z.boolean().default(false)
});

/** Preferences form: instant mails or a daily digest, quiet hours in a time zone. */
export const prefsFormSchema = z
	.object({
		alertMode: z.enum(ALERT_MODES, { message: 'Choose instant e-mails or a daily digest.' }),
		quietFrom: z.number().int().min(0).max(23, { message: 'Hours run from 0 to 23.' }).optional(),
		quietTo: z.number().int().min(0).max(23, { message: 'Hours run from 0 to 23.' }).optional(),
		timezone: z
			.string()
			.trim()
			.min(1, { message: 'Enter a time zone such as Europe/Berlin.' })
			.refine(isTimeZone, { message: 'Unknown time zone: use a name such as Europe/Berlin or America/Toronto.' }),
		digestHour: z.number({ message: 'Pick an hour.' }).int().min(0).max(23, { message: 'Hours run from 0 to 23.' })
	})
	.superRefine((v, ctx) => {
		if ((v.quietFrom === undefined) !== (v.quietTo === undefined)) {
			ctx.addIssue({
				code: 'custom',
				path: [v.quietFrom === undefined ? 'quietFrom' : 'quietTo'],
				message: 'Give both ends of the quiet hours, or neither.'
			});
		} else if (v.quietFrom !== undefined && v.quietFrom === v.quietTo) {
			ctx.addIssue({
				code: 'custom',
				path: ['quietTo'],
				message: 'Quiet hours must end at a different hour than they start.'
			});
		}
	});

export type PrefsForm = z.infer<typeof prefsFormSchema>;

/** Field errors from a zod error: the first message per field. */
export function fieldErrors(error: z.ZodError): Record<string, string> {
	const out: Record<string, string> = {};
	for (const issue of error.issues) {
		const key = String(issue.path[0] ?? 'form');
		out[key] ??= issue.message;
	}
	return out;
}

export class WatchInputError extends Error {
	constructor(
		readonly field: string,
		message: string
	) {
		super(message);
	}
}

export interface WatchRow {
	id: number;
	converterId: number | null;
	converterSlug: string | null;
	converterName: string | null;
	minBand: t.Band | null;
	maxPriceMinor: number | null;
	priceCurrency: string | null;
	region: t.Region | null;
	needsAudio: boolean;
	shopIds: number[];
	alsoPriceDrops: boolean;
	includeExpected: boolean;
	paused: boolean;
	createdAt: Date;
}

/** A member's watches, converter watches first. */
export async function listWatches(db: Db, userId: string): Promise<WatchRow[]> {
	const rows = await db
		.select({
			id: t.watches.id,
			converterId: t.watches.converterId,
			converterSlug: t.converters.slug,
			brand: t.converters.brand,
			model: t.converters.model,
			minBand: t.watches.minBand,
			maxPriceMinor: t.watches.maxPriceMinor,
			priceCurrency: t.watches.priceCurrency,
			region: t.watches.region,
			needsAudio: t.watches.needsAudio,
			shopIds: t.watches.shopIds,
			alsoPriceDrops: t.watches.alsoPriceDrops,
			includeExpected: t.watches.includeExpected,
			paused: t.watches.paused,
			createdAt: t.watches.createdAt
		})
		.from(t.watches)
		.leftJoin(t.converters, eq(t.converters.id, t.watches.converterId))
		.where(eq(t.watches.userId, userId))
		.orderBy(sql`${t.watches.converterId} is null`, asc(t.watches.id));
	return rows.map(({ brand, model, ...r }) => ({
		...r,
		converterName: brand ? `${brand} ${model}` : null,
		shopIds: r.shopIds ?? []
	}));
}

async function converterBySlug(db: Db, slug: string) {
	const [c] = await db.select({ id: t.converters.id }).from(t.converters).where(eq(t.converters.slug, slug));
	if (!c) throw new WatchInputError('converterSlug', 'That is not a converter from our catalogue.');
	return c.id;
}

async function valuesFromForm(db: Db, form: WatchForm) {
	const converterId = form.converterSlug ? await converterBySlug(db, form.converterSlug) : null;
	if (form.shopIds.length) {
		const known = await db.select({ id: t.shops.id }).from(t.shops).where(inArray(t.shops.id, form.shopIds));
		if (known.length !== new Set(form.shopIds).size)
			throw new WatchInputError('shopIds', 'One of those shops is not in our list.');
	}
	const maxPriceMinor =
		form.maxPrice !== undefined && form.priceCurrency ? toMinor(form.maxPrice, form.priceCurrency) : null;
	return {
		converterId,
		minBand: form.minBand ?? null,
		maxPriceMinor,
		priceCurrency: maxPriceMinor != null ? form.priceCurrency! : (form.priceCurrency ?? null),
		region: (form.region ?? null) as t.Region | null,
		needsAudio: form.needsAudio,
		shopIds: form.shopIds.length ? [...new Set(form.shopIds)] : null,
		alsoPriceDrops: form.alsoPriceDrops,
		includeExpected: form.includeExpected
	};
}

/** Create a watch or rule from the form. */
export async function createWatch(db: Db, userId: string, form: WatchForm) {
	const values = await valuesFromForm(db, form);
	const [row] = await db
		.insert(t.watches)
		.values({ userId, ...values })
		.returning({ id: t.watches.id });
	return row.id;
}

/** Replace a watch's criteria; false when it is not this member's. */
export async function updateWatch(db: Db, userId: string, id: number, form: WatchForm) {
	const values = await valuesFromForm(db, form);
	const rows = await db
		.update(t.watches)
		.set({ ...values, updatedAt: new Date() })
		.where(and(eq(t.watches.id, id), eq(t.watches.userId, userId)))
		.returning({ id: t.watches.id });
	return rows.length === 1;
}

/** Pause or resume; pausing skips alerts still waiting for this watch. */
export async function setPaused(db: Db, userId: string, id: number, paused: boolean) {
	const rows = await db
		.update(t.watches)
		.set({ paused, updatedAt: new Date() })
		.where(and(eq(t.watches.id, id), eq(t.watches.userId, userId)))
		.returning({ id: t.watches.id });
	if (rows.length && paused) {
		await db
			.update(t.alertOutbox)
			.set({ status: 'skipped', lastError: 'watch paused' })
			.where(and(eq(t.alertOutbox.watchId, id), eq(t.alertOutbox.status, 'pending')));
	}
	return rows.length === 1;
}

/** Delete a watch (its outbox rows go with it); false when it is not this member's. */
export async function deleteWatch(db: Db, userId: string, id: number) {
	const rows = await db
		.delete(t.watches)
		.where(and(eq(t.watches.id, id), eq(t.watches.userId, userId)))
		.returning({ id: t.watches.id });
	return rows.length === 1;
}

/**
 * The API's watch: one per member, converter and band limit. Returns the existing one when the
 * member already watches it that way (created false), so a double click makes one watch.
 */
export async function watchConverter(db: Db, userId: string, input: z.infer<typeof apiWatchSchema>) {
	const converterId = await converterBySlug(db, input.converterSlug);
	const minBand = input.minBand ?? null;
	const existing = await db
		.select({ id: t.watches.id, paused: t.watches.paused })
		.from(t.watches)
		.where(
			and(
				eq(t.watches.userId, userId),
				eq(t.watches.converterId, converterId),
				minBand ? eq(t.watches.minBand, minBand) : sql`${t.watches.minBand} is null`,
				sql`${t.watches.maxPriceMinor} is null and ${t.watches.region} is null and not ${t.watches.needsAudio} and ${t.watches.shopIds} is null`
			)
		)
		.limit(1);
	if (existing[0]) {
		if (existing[0].paused) await setPaused(db, userId, existing[0].id, false);
		return { id: existing[0].id, created: false };
	}
	const [row] = await db.insert(t.watches).values({ userId, converterId, minBand }).returning({ id: t.watches.id });
	return { id: row.id, created: true };
}

export interface Prefs {
	alertMode: AlertMode;
	quietFrom: number | null;
	quietTo: number | null;
	timezone: string;
	digestHour: number;
}

export async function getPrefs(db: Db, userId: string): Promise<Prefs> {
	const [p] = await db.select().from(t.memberPrefs).where(eq(t.memberPrefs.userId, userId));
	return p
		? {
				alertMode: p.alertMode,
				quietFrom: p.quietFrom,
				quietTo: p.quietTo,
				timezone: p.timezone,
				digestHour: p.digestHour
			}
		: { alertMode: 'instant', quietFrom: null, quietTo: null, timezone: 'UTC', digestHour: 8 };
}

/**
 * Save preferences. Switching mode moves alerts still waiting to the new mode, so nothing
 * is lost or sent twice in the switch.
 */
export async function savePrefs(db: Db, userId: string, form: PrefsForm) {
	const values = {
		alertMode: form.alertMode,
		quietFrom: form.quietFrom ?? null,
		quietTo: form.quietTo ?? null,
		timezone: form.timezone,
		digestHour: form.digestHour,
		updatedAt: new Date()
	};
	await db
		.insert(t.memberPrefs)
		.values({ userId, ...values })
		.onConflictDoUpdate({ target: t.memberPrefs.userId, set: values });
	await db
		.update(t.alertOutbox)
		.set({ mode: form.alertMode })
		.where(and(eq(t.alertOutbox.userId, userId), eq(t.alertOutbox.status, 'pending')));
}
