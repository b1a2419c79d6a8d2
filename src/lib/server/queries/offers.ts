/** Current offers and exchange rates from the database, for the pricing helpers in $lib/pricing. */
import { and, asc, eq, inArray, isNull, sql, type Placeholder, type SQL } from 'drizzle-orm';
import type { Db } from './catalogue-entries';
import { listingStates, listings, shops } from '../db/schema';
import type { CurrentOffer, RatesPerEur, Region } from '../../pricing';
import { preparedFor } from '../db/prepared';

/**
 * The SQL of the latest EUR-based rate per currency on or before `day` (YYYY-MM-DD), as a JSON
 * object { "EUR": 1, "USD": 1.0845, ... }: the one definition of "today's rates", read on its own
 * (loadRates) or inside the read model's statements.
 */
export function ratesSql(day: string | Placeholder): SQL {
	return sql`(select jsonb_build_object('EUR', 1) || coalesce(jsonb_object_agg(trim(r.quote), r.rate), '{}')
		from (select distinct on (quote) quote, rate from exchange_rate
			where base = 'EUR' and day <= ${day} order by quote, day desc) r)`;
}

/** Today's date in UTC (YYYY-MM-DD), the day rates are looked up for. */
export const rateDay = () => new Date().toISOString().slice(0, 10);

/** Latest EUR-based rate per currency on or before `day`. */
export async function loadRates(db: Db, day = rateDay()): Promise<RatesPerEur> {
	const [row] = (await db.execute(sql`select ${ratesSql(day)} as rates`)) as unknown as Array<{ rates: RatesPerEur }>;
	return row.rates;
}

/**
 * Every active listing's current price and stock, optionally only for some converters and
 * only at shops based in or shipping to a region (filtered in SQL so a large catalogue reads less).
 */
export async function currentOffers(db: Db, converterIds?: number[], region?: Region): Promise<CurrentOffer[]> {
	const query = (where: SQL | undefined) =>
		db
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
			.where(and(eq(listings.active, true), isNull(listings.delistedAt), eq(shops.active, true), where))
			// a stable order: the converter page's document, and its rows that tie, keep it
			.orderBy(asc(listings.id));
	// one converter's offers in every region (its page): built once. By its id, not an id list:
	// a generic plan for `= any(list)` guesses 100 listings and reads every listing state.
	if (converterIds?.length === 1 && !region)
		return preparedFor(db, 'current_offers_of', () =>
			query(eq(listings.converterId, sql.placeholder('id'))).prepare('current_offers_of')
		).execute({ id: converterIds[0] });
	return query(
		and(
			converterIds ? inArray(listings.converterId, converterIds.length ? converterIds : [-1]) : undefined,
			region ? sql`(${shops.region} = ${region} or ${region} = any(${shops.shipsTo}))` : undefined
		)
	);
}
