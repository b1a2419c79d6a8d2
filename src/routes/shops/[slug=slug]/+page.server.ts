/** /shops/[slug]: a shop's public record and its listings with their restock outlooks. */
import { error } from '@sveltejs/kit';
import { and, asc, eq, isNull } from 'drizzle-orm';
import { db } from '$lib/server/db';
import { converters, listingStates, listings, shops } from '$lib/server/db/schema';
import { formatSpan } from '$lib/restock';
import { listingOutlooks, RECORD_DAYS, shopRecords } from '$lib/server/queries/shops';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, setHeaders }) => {
	const [shop] = await db.select({ id: shops.id }).from(shops).where(eq(shops.slug, params.slug));
	if (!shop) error(404, 'No shop by that name.');
	const [records, rows] = await Promise.all([
		shopRecords(db, { shopIds: [shop.id] }),
		db
			.select({
				id: listings.id,
				converterSlug: converters.slug,
				brand: converters.brand,
				model: converters.model,
				stock: listingStates.currentStock,
				since: listingStates.currentSince
			})
			.from(listings)
			.innerJoin(converters, eq(converters.id, listings.converterId))
			.leftJoin(listingStates, eq(listingStates.listingId, listings.id))
			.where(and(eq(listings.shopId, shop.id), eq(listings.active, true), isNull(listings.delistedAt)))
			.orderBy(asc(converters.brand), asc(converters.model))
	]);
	const record = records.get(shop.id)!;
	const outlooks = await listingOutlooks(
		db,
		rows.map((r) => r.id)
	);
	setHeaders({ 'Cache-Control': 'public, max-age=300' });
	return {
		days: RECORD_DAYS,
		record: {
			...record,
			from: record.from.toISOString(),
			to: record.to.toISOString(),
			medianRestockGap: record.medianRestockGapMs === null ? null : formatSpan(record.medianRestockGapMs)
		},
		listings: rows.map((r) => ({
			id: r.id,
			converterSlug: r.converterSlug,
			name: `${r.brand} ${r.model}`,
			stock: r.stock ?? 'unknown',
			outlook: outlooks.get(r.id)?.text ?? null
		}))
	};
};
