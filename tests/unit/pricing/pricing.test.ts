import { describe, expect, it } from 'vitest';
import {
	bestOfferByConverter,
	convertMinor,
	formatMoney,
	regionFromAcceptLanguage,
	type CurrentOffer
} from '../../../src/lib/pricing';

// Invented rates for the checks (units per 1 EUR).
const rates = { EUR: 1, USD: 1.08, GBP: 0.85, JPY: 162, AUD: 1.65 };

describe('convertMinor', () => {
	it('honours each currency minor unit (ISO 4217: JPY has 0 decimals, EUR and USD 2)', () => {
		// 16.20 EUR * 162 = 2624.4 JPY -> 2624 (whole yen)
		expect(convertMinor(1620, 'EUR', 'JPY', rates)).toBe(2624);
		// 3240 JPY / 162 = 20.00 EUR -> 2000 cents
		expect(convertMinor(3240, 'JPY', 'EUR', rates)).toBe(2000);
		// 10.80 USD -> 10.00 EUR -> 8.50 GBP
		expect(convertMinor(1080, 'USD', 'GBP', rates)).toBe(850);
	});
	it('returns null instead of guessing when a rate is missing', () => {
		expect(convertMinor(100, 'EUR', 'CHF', rates)).toBeNull();
	});
	it('formats with the currency code', () => {
		expect(formatMoney(1290, 'EUR')).toBe('12.90 EUR');
		expect(formatMoney(3480, 'JPY')).toBe('3,480 JPY');
	});
});

describe('bestOfferByConverter', () => {
	const base = { shopName: 'S', url: 'http://x', lastCheckedAt: null, lastSuccessAt: null } as const;
	const offers: CurrentOffer[] = [
		{
			...base,
			listingId: 1,
			converterId: 7,
			shopSlug: 'a',
			shopRegion: 'eu',
			shipsTo: ['eu'],
			priceMinor: 1500,
			currency: 'EUR',
			stock: 'in_stock'
		},
		{
			...base,
			listingId: 2,
			converterId: 7,
			shopSlug: 'b',
			shopRegion: 'uk',
			shipsTo: ['uk', 'eu'],
			priceMinor: 1020,
			currency: 'GBP',
			stock: 'in_stock'
		},
		{
			...base,
			listingId: 3,
			converterId: 7,
			shopSlug: 'c',
			shopRegion: 'eu',
			shipsTo: ['eu'],
			priceMinor: 900,
			currency: 'EUR',
			stock: 'out_of_stock'
		},
		{
			...base,
			listingId: 4,
			converterId: 7,
			shopSlug: 'd',
			shopRegion: 'na',
			shipsTo: ['na'],
			priceMinor: 500,
			currency: 'USD',
			stock: 'in_stock'
		}
	];
	it('picks the cheapest buyable offer that serves the region, in the display currency', () => {
		const best = bestOfferByConverter(offers, 'eu', 'EUR', rates).get(7)!;
		// 10.20 GBP / 0.85 = 12.00 EUR beats 15.00 EUR; the 9.00 EUR one is sold out; the USD shop does not ship to the EU.
		expect(best.listingId).toBe(2);
		expect(best.displayMinor).toBe(1200);
	});
	it('has nothing for a region no shop serves', () => {
		expect(bestOfferByConverter(offers, 'jp', 'JPY', rates).size).toBe(0);
	});
});

describe('regionFromAcceptLanguage (RFC 9110 section 12.5.4 quality values)', () => {
	it('uses the region subtag of the preferred language', () => {
		expect(regionFromAcceptLanguage('en-GB,en;q=0.8')).toBe('uk');
		expect(regionFromAcceptLanguage('en-US')).toBe('na');
		expect(regionFromAcceptLanguage('de-DE,de;q=0.9')).toBe('eu');
		expect(regionFromAcceptLanguage('fr;q=0.2, ja-JP;q=0.9')).toBe('jp');
		expect(regionFromAcceptLanguage('en-AU')).toBe('au');
	});
	it('falls back to the language, then to the EU', () => {
		expect(regionFromAcceptLanguage('ja')).toBe('jp');
		expect(regionFromAcceptLanguage('en')).toBe('eu');
		expect(regionFromAcceptLanguage('')).toBe('eu');
		expect(regionFromAcceptLanguage(undefined)).toBe('eu');
	});
});
