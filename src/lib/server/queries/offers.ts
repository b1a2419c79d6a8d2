/** Current offers and exchange rates from the database, for the pricing helpers in $lib/pricing. */
import { and, desc, eq, inArray, isNull, lte, sql } from 'drizzle-orm';
import type { Db } from './catalogue-entries';
import { exchangeRates, listingStates, listings, shops } from '../db/schema';
import type { CurrentOffer, RatesPerEur, Region } from '../../pricing';

/** Latest EUR-based rate per currency on or before `day` (YYYY-MM-DD). */
export async function loadRates(db: Db, day = new Date().toISOString().slice(0, 10)): Promise<RatesPerEur> {
	const rows = await db
		.selectDistinctOn([exchangeRates.quote], { quote: exchangeRates.quote, rate: exchangeRates.rate })
		.from(exchangeRates)
		.where(and(eq(exchangeRates.base, 'EUR'), lte(exchangeRates.day, day)))
		.orderBy(exchangeRates.quote, desc(exchangeRates.day));
	const rates: RatesPerEur = { EUR: 1 };
	for (const r of rows) rates[r.quote] = Number(r.rate);
	return rates;
}

/**
 * Every active listing's current price and stock, optionally only for some converters and
 * only at shops based in or shipping to a region (filtered in SQL so a large catalogue reads less).
 */
export async function currentOffers(db: Db, converterIds?: number[], region?: Region): Promise<CurrentOffer[]> {
	const rows = await db
		.select({
			listingId: listings.id,
			converterId: listings.converterId,
			shopSlug: shops.slug,
			shopName: shops.name,
			shopRegion: shops.region,
			shipsTo: shops.shipsTo,
			url: listings.url,
			priceMinor: listingStates.currentPriceMinor,
			currency: listingStates.currentCurrency,
			stock: sql<CurrentOffer['stock']>`coalesce(${listingStates.currentStock}, 'unknown')`,
			lastCheckedAt: listingStates.lastCheckedAt,
			lastSuccessAt: listingStates.lastSuccessAt
		})
		.from(listings)
		.innerJoin(shops, eq(shops.id, listings.shopId))
		.leftJoin(listingStates, eq(listingStates.listingId, listings.id))
		.where(
			and(
				eq(listings.active, true),
				isNull(listings.delistedAt),
				eq(shops.active, true),
				converterIds ? inArray(listings.converterId, converterIds.length ? converterIds : [-1]) : undefined,
				region ? sql`(${shops.region} = ${region} or ${region} = any(${shops.shipsTo}))` : undefined
			)
		);
	return rows;
}
