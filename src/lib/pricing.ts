/**
 * Money across regions: converting prices through dated exchange rates and picking the best
 * buyable offer for a visitor's region. Pure: the database side is src/lib/server/queries/offers.ts.
 */
import { REGIONS, type Region, type StockState } from './enums';
import { formatMoney, minorDigits, toMinor } from './money';

export { REGIONS as REGION_CODES, type Region, type StockState };
// Formatting and parsing money is the money helper's (src/lib/money.ts); re-exported for callers here.
export { formatMoney, toMinor };
export const REGION_LABELS: Record<Region, string> = {
	na: 'North America',
	eu: 'European Union',
	uk: 'United Kingdom',
	jp: 'Japan',
	au: 'Australia'
};
export const REGION_CURRENCY: Record<Region, string> = { na: 'USD', eu: 'EUR', uk: 'GBP', jp: 'JPY', au: 'AUD' };

/** Units of each currency that one EUR buys (the exchange_rate table's base is EUR). */
export type RatesPerEur = Record<string, number>;

/**
 * Convert an amount in minor units between currencies, rounding to the target's minor unit.
 * Returns null when a rate is missing, so a caller never shows a made-up figure.
 */
export function convertMinor(amountMinor: number, from: string, to: string, rates: RatesPerEur): number | null {
	if (from === to) return amountMinor;
	const rFrom = rates[from];
	const rTo = rates[to];
	if (!rFrom || !rTo) return null;
	const major = amountMinor / 10 ** minorDigits(from);
	return Math.round((major / rFrom) * rTo * 10 ** minorDigits(to));
}

/** In stock and preorder can be bought now; the rest cannot. */
export function isBuyable(stock: StockState): boolean {
	return (BUYABLE_STOCK as readonly StockState[]).includes(stock);
}

/** The stock states a buyer can order in (isBuyable), for queries that judge it in SQL. */
export const BUYABLE_STOCK = ['in_stock', 'preorder'] as const satisfies readonly StockState[];

/** One listing's current state, as the offers query returns it. */
export interface CurrentOffer {
	listingId: number;
	converterId: number;
	shopSlug: string;
	shopName: string;
	shopRegion: Region;
	shipsTo: Region[];
	url: string;
	priceMinor: number | null;
	currency: string | null;
	stock: StockState;
	lastCheckedAt: Date | null;
	lastSuccessAt: Date | null;
}

/** A shop serves a region when it is based there or ships there. */
export function servesRegion(offer: Pick<CurrentOffer, 'shopRegion' | 'shipsTo'>, region: Region): boolean {
	return offer.shopRegion === region || offer.shipsTo.includes(region);
}

export interface PricedOffer extends CurrentOffer {
	/** The price in the visitor's display currency (null when no rate is known). */
	displayMinor: number | null;
	displayCurrency: string;
}

/**
 * Buyable offers in a region, priced in the display currency, cheapest first.
 * Offers with an unknown price or currency are left out: they cannot be compared.
 */
export function buyableOffers(
	offers: CurrentOffer[],
	region: Region,
	displayCurrency: string,
	rates: RatesPerEur
): PricedOffer[] {
	return offers
		.filter((o) => isBuyable(o.stock) && o.priceMinor != null && o.currency && servesRegion(o, region))
		.map((o) => ({
			...o,
			displayMinor: convertMinor(o.priceMinor!, o.currency!, displayCurrency, rates),
			displayCurrency
		}))
		.sort((a, b) => (a.displayMinor ?? Infinity) - (b.displayMinor ?? Infinity));
}

/** The cheapest buyable offer per converter in a region. */
export function bestOfferByConverter(
	offers: CurrentOffer[],
	region: Region,
	displayCurrency: string,
	rates: RatesPerEur
): Map<number, PricedOffer> {
	const best = new Map<number, PricedOffer>();
	for (const o of buyableOffers(offers, region, displayCurrency, rates)) {
		if (!best.has(o.converterId)) best.set(o.converterId, o);
	}
	return best;
}

/**
 * A region from an Accept-Language header (RFC 9110 section 12.5.4): the first language
 * tag with a region subtag we serve, else a language we can place, else EU.
 */
export function regionFromAcceptLanguage(header: string | null | undefined): Region {
	const tags = (header ?? '')
		.split(',')
		.map((part) => {
			const [tag, ...params] = part.trim().split(';');
			const q = params.map((p) => p.trim()).find((p) => p.startsWith('q='));
			return { tag: tag.toLowerCase(), q: q ? Number(q.slice(2)) : 1 };
		})
		.filter((t) => t.tag && t.tag !== '*' && !Number.isNaN(t.q) && t.q > 0)
		.sort((a, b) => b.q - a.q);
	const byCountry: Record<string, Region> = {
		us: 'na',
		ca: 'na',
		mx: 'na',
		gb: 'uk',
		uk: 'uk',
		jp: 'jp',
		au: 'au',
		nz: 'au'
	};
	const euCountries = new Set([
		'de',
		'fr',
		'it',
		'es',
		'nl',
		'be',
		'at',
		'pt',
		'ie',
		'fi',
		'se',
		'dk',
		'pl',
		'cz',
		'gr',
		'lu',
		'si',
		'sk',
		'ee',
		'lv',
		'lt',
		'hr',
		'hu',
		'ro',
		'bg',
		'cy',
		'mt'
	]);
	for (const { tag } of tags) {
		const country = tag.split('-')[1];
		if (country && byCountry[country]) return byCountry[country];
		if (country && euCountries.has(country)) return 'eu';
	}
	for (const { tag } of tags) {
		const lang = tag.split('-')[0];
		if (lang === 'ja') return 'jp';
		if (['de', 'fr', 'it', 'es', 'nl', 'pt', 'fi', 'sv', 'da', 'pl', 'cs', 'el'].includes(lang)) return 'eu';
	}
	return 'eu';
}
