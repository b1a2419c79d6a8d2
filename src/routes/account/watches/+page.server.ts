/**
 * /account/watches: a member's watches and rules (create, edit, pause, delete) and alert
 * preferences. Actions parse with zod and answer fail(400) with field errors and the values
 * typed, so nothing is lost.
 */
import { fail } from '@sveltejs/kit';
import { and, asc, eq, inArray, isNull } from 'drizzle-orm';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { converters, listings, listingStates, shops } from '$lib/server/db/schema';
import { listingNotes } from '$lib/server/queries/shops';
import {
	createWatch,
	deleteWatch,
	fieldErrors,
	getPrefs,
	listWatches,
	prefsFormSchema,
	savePrefs,
	setPaused,
	updateWatch,
	watchFormSchema,
	WatchInputError
} from '$lib/server/alerts/watches';
import type { Actions, PageServerLoad } from './$types';
import { formOr400 } from '$lib/server/http/body';
import { PG_INT_MAX } from '$lib/server/http/numbers';

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
	return {
		watches,
		prefs,
		converters: converterList,
		shops: shopList,
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

/** Form fields as plain values, to send back on error. */
function valuesOf(form: FormData) {
	return {
		converterSlug: String(form.get('converterSlug') ?? ''),
		minBand: String(form.get('minBand') ?? ''),
		maxPrice: String(form.get('maxPrice') ?? ''),
		priceCurrency: String(form.get('priceCurrency') ?? ''),
		region: String(form.get('region') ?? ''),
		needsAudio: form.get('needsAudio') === 'on',
		alsoPriceDrops: form.get('alsoPriceDrops') === 'on',
		includeExpected: form.get('includeExpected') === 'on',
		shopIds: form.getAll('shopIds').map(String)
	};
}

function parseWatch(form: FormData) {
	const values = valuesOf(form);
	return {
		values,
		parsed: watchFormSchema.safeParse({
			...values,
			needsAudio: form.get('needsAudio'),
			alsoPriceDrops: form.get('alsoPriceDrops'),
			includeExpected: form.get('includeExpected')
		})
	};
}

function watchId(form: FormData): number | null {
	const raw = String(form.get('id') ?? '');
	// Within PostgreSQL integer: a larger id would fail in the query, not here.
	return /^[1-9][0-9]{0,9}$/.test(raw) && Number(raw) <= PG_INT_MAX ? Number(raw) : null;
}

export const actions: Actions = {
	create: async (event) => {
		const user = requireRole(event, 'member');
		const form = await formOr400(event.request);
		const { values, parsed } = parseWatch(form);
		if (!parsed.success) return fail(400, { form: 'create', values, errors: fieldErrors(parsed.error) });
		try {
			await createWatch(db, user.id, parsed.data);
		} catch (err) {
			if (err instanceof WatchInputError)
				return fail(400, { form: 'create', values, errors: { [err.field]: err.message } });
			throw err;
		}
		return { form: 'create', saved: 'Watch added.' };
	},
	update: async (event) => {
		const user = requireRole(event, 'member');
		const form = await formOr400(event.request);
		const id = watchId(form);
		const { values, parsed } = parseWatch(form);
		if (id == null)
			return fail(400, { form: `edit-${form.get('id')}`, values, errors: { form: 'That watch id is not valid.' } });
		if (!parsed.success) return fail(400, { form: `edit-${id}`, values, errors: fieldErrors(parsed.error) });
		try {
			if (!(await updateWatch(db, user.id, id, parsed.data)))
				return fail(404, { form: `edit-${id}`, values, errors: { form: 'That watch is no longer there.' } });
		} catch (err) {
			if (err instanceof WatchInputError)
				return fail(400, { form: `edit-${id}`, values, errors: { [err.field]: err.message } });
			throw err;
		}
		return { form: `edit-${id}`, saved: 'Watch saved.' };
	},
	pause: async (event) => {
		const user = requireRole(event, 'member');
		const form = await formOr400(event.request);
		const id = watchId(form);
		if (id == null) return fail(400, { form: 'list', errors: { form: 'That watch id is not valid.' } });
		const paused = form.get('paused') === 'true';
		if (!(await setPaused(db, user.id, id, paused)))
			return fail(404, { form: 'list', errors: { form: 'That watch is no longer there.' } });
		return { form: 'list', saved: paused ? 'Watch paused.' : 'Watch resumed.' };
	},
	delete: async (event) => {
		const user = requireRole(event, 'member');
		const form = await formOr400(event.request);
		const id = watchId(form);
		if (id == null) return fail(400, { form: 'list', errors: { form: 'That watch id is not valid.' } });
		if (!(await deleteWatch(db, user.id, id)))
			return fail(404, { form: 'list', errors: { form: 'That watch is no longer there.' } });
		return { form: 'list', saved: 'Watch deleted.' };
	},
	prefs: async (event) => {
		const user = requireRole(event, 'member');
		const form = await formOr400(event.request);
		const values = {
			alertMode: String(form.get('alertMode') ?? ''),
			quietFrom: String(form.get('quietFrom') ?? ''),
			quietTo: String(form.get('quietTo') ?? ''),
			timezone: String(form.get('timezone') ?? ''),
			digestHour: String(form.get('digestHour') ?? '')
		};
		const parsed = prefsFormSchema.safeParse(values);
		if (!parsed.success) return fail(400, { form: 'prefs', prefValues: values, errors: fieldErrors(parsed.error) });
		await savePrefs(db, user.id, parsed.data);
		return { form: 'prefs', saved: 'Preferences saved.' };
	}
};
