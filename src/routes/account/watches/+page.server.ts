/**
 * /account/watches: a member's watches and rules (create, edit, pause, delete) and alert
 * preferences. Forms go through superforms like the workspace's: a bad field is a 400 with the
 * message on it and everything typed kept. Each watch's edit and button forms carry their own
 * superform id (`edit-<id>`, `row-<id>`), so an answer lands on the form that was sent.
 */
import { redirect } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { and, asc, eq, inArray, isNull } from 'drizzle-orm';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { converters, listings, listingStates, shops } from '$lib/server/db/schema';
import { listingNotes } from '$lib/server/queries/shops';
import {
	createWatch,
	deleteWatch,
	getPrefs,
	listWatches,
	prefsFormSchema,
	savePrefs,
	setPaused,
	updateWatch,
	watchActionSchema,
	watchFormSchema,
	WatchInputError,
	type WatchForm,
	type WatchRow
} from '$lib/server/alerts/watches';
import { quietHoursFromEnv } from '$lib/server/alerts/match';
import { FieldError } from '$lib/server/curate/common';
import { attempt, done, emptyForm, invalid, validate, withMessage } from '$lib/server/curate/forms';
import { formOr400 } from '$lib/server/http/body';
import { PG_INT_MAX } from '$lib/server/http/numbers';
import { toMajor } from '$lib/money';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'member');
	const [watches, prefs, converterList, shopList] = await Promise.all([
		listWatches(db, user.id),
		getPrefs(db, user.id),
		db
			.select({ slug: converters.slug, brand: converters.brand, model: converters.model })
			.from(converters)
			.where(isNull(converters.retiredAt))
			.orderBy(asc(converters.brand), asc(converters.model)),
		db.select({ id: shops.id, name: shops.name, region: shops.region }).from(shops).orderBy(asc(shops.name))
	]);
	const [createForm, prefsForm, editForms, rowForms] = await Promise.all([
		emptyForm(watchFormSchema, {}, 'create'),
		emptyForm(
			prefsFormSchema,
			{
				alertMode: prefs.alertMode,
				quietFrom: prefs.quietFrom ?? undefined,
				quietTo: prefs.quietTo ?? undefined,
				timezone: prefs.timezone,
				digestHour: prefs.digestHour
			},
			'prefs'
		),
		Promise.all(watches.map((w) => emptyForm(watchFormSchema, formValuesOf(w), `edit-${w.id}`))),
		Promise.all(watches.map((w) => emptyForm(watchActionSchema, { id: w.id, paused: !w.paused }, `row-${w.id}`)))
	]);
	return {
		watches: watches.map((w, i) => ({ ...w, editForm: editForms[i], rowForm: rowForms[i] })),
		createForm,
		prefsForm,
		converters: converterList,
		shops: shopList,
		// The jobs process reads the same setting for its quiet period.
		quietHours: quietHoursFromEnv(env),
		outlooks: await watchedOutlooks(watches.map((w) => w.converterId).filter((id): id is number => id !== null))
	};
};

/** Per watched converter, its listings' restock outlooks (only those with enough history to say something). */
async function watchedOutlooks(converterIds: number[]) {
	if (!converterIds.length)
		return {} as Record<
			number,
			Array<{ listingId: number; shopName: string; shopSlug: string; stock: string; text: string }>
		>;
	const rows = await db
		.select({
			id: listings.id,
			converterId: listings.converterId,
			shopName: shops.name,
			shopSlug: shops.slug,
			stock: listingStates.currentStock
		})
		.from(listings)
		.innerJoin(shops, eq(shops.id, listings.shopId))
		.leftJoin(listingStates, eq(listingStates.listingId, listings.id))
		.where(and(inArray(listings.converterId, converterIds), eq(listings.active, true), isNull(listings.delistedAt)))
		.orderBy(asc(shops.name));
	const notes = await listingNotes(
		db,
		rows.map((r) => r.id)
	);
	const out: Record<
		number,
		Array<{ listingId: number; shopName: string; shopSlug: string; stock: string; text: string }>
	> = {};
	for (const r of rows) {
		const text = notes.get(r.id)?.outlook.text;
		if (text)
			(out[r.converterId] ??= []).push({
				listingId: r.id,
				shopName: r.shopName,
				shopSlug: r.shopSlug,
				stock: r.stock ?? 'unknown',
				text
			});
	}
	return out;
}

/** A watch's saved criteria as the edit form's values. */
function formValuesOf(w: WatchRow): WatchForm {
	return {
		converterSlug: w.converterSlug ?? undefined,
		minBand: w.minBand ?? undefined,
		maxPrice: w.maxPriceMinor != null && w.priceCurrency ? toMajor(w.maxPriceMinor, w.priceCurrency) : undefined,
		priceCurrency: w.priceCurrency ?? undefined,
		region: w.region ?? undefined,
		needsAudio: w.needsAudio,
		alsoPriceDrops: w.alsoPriceDrops,
		includeExpected: w.includeExpected,
		shopIds: w.shopIds
	};
}

/** The watch id the edit form posts beside its fields; null when it is not a whole number within PostgreSQL integer. */
function watchId(form: FormData): number | null {
	const raw = String(form.get('id') ?? '');
	return /^[1-9][0-9]{0,9}$/.test(raw) && Number(raw) <= PG_INT_MAX ? Number(raw) : null;
}

/** A WatchInputError (unknown converter or shop) as a 400 on its field, keeping what was typed. */
function inputErrors<R>(form: Parameters<typeof attempt>[0], work: () => Promise<R>) {
	return attempt(form, async () => {
		try {
			return await work();
		} catch (err) {
			if (err instanceof WatchInputError) throw new FieldError(err.field, err.message);
			throw err;
		}
	});
}

export const actions: Actions = {
	create: async (event) => {
		const user = requireRole(event, 'member');
		const form = await validate(event.request, watchFormSchema);
		if (!form.valid) return invalid(form);
		const res = await inputErrors(form, () => createWatch(db, user.id, form.data));
		if (!res.ok) return res.failure;
		return { form: done(form, 'Watch added.') };
	},
	update: async (event) => {
		const user = requireRole(event, 'member');
		const data = await formOr400(event.request);
		const id = watchId(data);
		const form = await validate(data, watchFormSchema);
		if (id == null) return invalid(withMessage(form, 'That watch id is not valid.'));
		if (!form.valid) return invalid(form);
		const res = await inputErrors(form, async () => {
			if (!(await updateWatch(db, user.id, id, form.data)))
				throw new FieldError(null, 'That watch is no longer there.', 404);
		});
		if (!res.ok) return res.failure;
		return { form: done(form, 'Watch saved.') };
	},
	pause: async (event) => {
		const user = requireRole(event, 'member');
		const form = await validate(event.request, watchActionSchema);
		if (!form.valid) return invalid(withMessage(form, 'That watch id is not valid.'));
		const { id, paused } = form.data;
		const res = await attempt(form, async () => {
			if (!(await setPaused(db, user.id, id, paused)))
				throw new FieldError(null, 'That watch is no longer there.', 404);
		});
		if (!res.ok) return res.failure;
		return { form: done(form, paused ? 'Watch paused.' : 'Watch resumed.') };
	},
	delete: async (event) => {
		const user = requireRole(event, 'member');
		const form = await validate(event.request, watchActionSchema);
		if (!form.valid) return invalid(withMessage(form, 'That watch id is not valid.'));
		const res = await attempt(form, async () => {
			if (!(await deleteWatch(db, user.id, form.data.id)))
				throw new FieldError(null, 'That watch is no longer there.', 404);
		});
		if (!res.ok) return res.failure;
		// The row is gone with its form, so the page says it.
		redirect(303, '/account/watches?deleted=1');
	},
	prefs: async (event) => {
		const user = requireRole(event, 'member');
		const form = await validate(event.request, prefsFormSchema);
		if (!form.valid) return invalid(form);
		await savePrefs(db, user.id, form.data);
		return { form: done(form, 'Preferences saved.') };
	}
};
