/**
 * Price parsing to integer minor units.
 * Source for the digits: ISO 4217, "minor unit" column of the currency code list (JPY 0, KRW 0,
 * BHD/KWD 3, USD/EUR/GBP/AUD... 2).
 * Source for the text form of Offer.price: schema.org 30.0, Offer.price (a "." decimal point,
 * the currency in priceCurrency, never a symbol).
 */
import { describe, expect, it } from 'vitest';
import { detectCurrency, formatMinor, minorDigits, parseAmount, parsePrice } from '../../../src/lib/feeds';

describe('ISO 4217 minor units (ISO 4217 currency list, minor unit column)', () => {
	it.each([
		['USD', 2],
		['EUR', 2],
		['GBP', 2],
		['JPY', 0],
		['AUD', 2],
		['CAD', 2],
		['CHF', 2],
		['SEK', 2],
		['NOK', 2],
		['DKK', 2],
		['PLN', 2],
		['NZD', 2],
		['KRW', 0],
		['BHD', 3],
		['KWD', 3]
	])('%s has %i minor digits', (code, digits) => {
		expect(minorDigits(code)).toBe(digits);
	});

	it('defaults to 2 digits for a code outside the table', () => {
		expect(minorDigits('XYZ')).toBe(2);
	});

	it('JPY 3480 is 3480 minor units (exponent 0, ISO 4217)', () => {
		expect(parseAmount('3480', 'JPY')).toMatchObject({ ok: true, minor: 3480 });
		expect(parseAmount(3480, 'JPY')).toMatchObject({ ok: true, minor: 3480 });
		expect(parseAmount('¥3,480', 'JPY')).toMatchObject({ ok: true, minor: 3480 });
	});

	it('KRW has no minor unit either (ISO 4217)', () => {
		expect(parseAmount('₩45,000', 'KRW')).toMatchObject({ ok: true, minor: 45000 });
	});

	it('a three-digit currency reads "1.250" as one and a quarter (ISO 4217: KWD 3)', () => {
		expect(parseAmount('1.250', 'KWD')).toMatchObject({ ok: true, minor: 1250 });
	});

	it('JPY with decimals is rounded with a note rather than multiplied by 100', () => {
		const r = parseAmount('3480.6', 'JPY');
		expect(r).toMatchObject({ ok: true, minor: 3481 });
		if (r.ok) expect(r.notes.join(' ')).toMatch(/rounded/);
	});

	it('formats minor units back with the currency exponent', () => {
		expect(formatMinor(2499, 'USD')).toBe('24.99');
		expect(formatMinor(3480, 'JPY')).toBe('3480');
		expect(formatMinor(5, 'EUR')).toBe('0.05');
	});
});

describe('price text formats', () => {
	it.each([
		['24.99', 'USD', 2499], // schema.org 30.0 Offer.price: "." decimal point
		['1.234,56 €', 'EUR', 123456],
		['€ 12,90', 'EUR', 1290],
		['£15.95', 'GBP', 1595],
		['1,234.56', 'USD', 123456],
		['1 234,56 kr', 'SEK', 123456],
		['1\u00a0234,56\u00a0€', 'EUR', 123456],
		["CHF 1'234.50", 'CHF', 123450],
		['12,-', 'EUR', 1200],
		['39.5', 'USD', 3950],
		['1.234.567,89', 'EUR', 123456789],
		['US$ 7', 'USD', 700]
	])('"%s" in %s is %i', (text, currency, minor) => {
		expect(parseAmount(text, currency)).toMatchObject({ ok: true, minor });
	});

	it('numbers are converted without float drift', () => {
		expect(parseAmount(24.99, 'USD')).toMatchObject({ ok: true, minor: 2499 });
		expect(parseAmount(1.005, 'USD')).toMatchObject({ ok: true, minor: 101 });
		expect(parseAmount(0.1 + 0.2, 'EUR')).toMatchObject({ ok: true, minor: 30 });
	});

	it.each([['abc'], [''], ['Preis auf Anfrage'], ['0,00 €'], ['0'], ['-5.00'], ['€ -3,50'], ['1,23,45.6']])(
		'"%s" is an error, never 0 or negative',
		(text) => {
			const r = parseAmount(text, 'EUR');
			expect(r.ok).toBe(false);
			if (!r.ok) expect(r.reason.length).toBeGreaterThan(5);
		}
	);

	it('negative and zero numbers are errors', () => {
		expect(parseAmount(-1, 'USD').ok).toBe(false);
		expect(parseAmount(0, 'USD').ok).toBe(false);
		expect(parseAmount(Number.NaN, 'USD').ok).toBe(false);
	});
});

describe('currency detection', () => {
	it('reads ISO 4217 codes and unambiguous symbols', () => {
		expect(detectCurrency('EUR')).toMatchObject({ found: true, currency: 'EUR', source: 'code' });
		expect(detectCurrency('12,90 €')).toMatchObject({ found: true, currency: 'EUR', source: 'symbol' });
		expect(detectCurrency('£15.95')).toMatchObject({ found: true, currency: 'GBP' });
		expect(detectCurrency('A$21.95')).toMatchObject({ found: true, currency: 'AUD' });
		expect(detectCurrency('Preis: 12,90')).toMatchObject({ found: false });
	});

	it('"$" takes the listing currency when that is a dollar, and is not guessed otherwise', () => {
		expect(detectCurrency('$21.95', 'AUD')).toMatchObject({ found: true, currency: 'AUD' });
		expect(detectCurrency('$21.95', 'USD')).toMatchObject({ found: true, currency: 'USD' });
		expect(detectCurrency('$21.95')).toMatchObject({ found: false, ambiguous: expect.arrayContaining(['USD', 'AUD']) });
	});

	it('parsePrice gives a wrong-currency error for a currency other than the expected one', () => {
		expect(parsePrice('15.95', { currencyText: 'EUR', expectedCurrency: 'GBP' })).toMatchObject({
			ok: false,
			kind: 'wrong-currency'
		});
		expect(parsePrice('$22.90', { expectedCurrency: 'EUR' })).toMatchObject({ ok: false, kind: 'wrong-currency' });
	});

	it('parsePrice reads a bare amount in the expected currency (with a note), and gives no-currency without one', () => {
		expect(parsePrice('22,90', { expectedCurrency: 'EUR' })).toMatchObject({
			ok: true,
			minor: 2290,
			currency: 'EUR',
			notes: [expect.stringMatching(/configured currency EUR/)]
		});
		expect(parsePrice(22.9, {})).toMatchObject({ ok: false, kind: 'no-currency' });
	});

	it('CA$ is Canadian dollars, never Australian (ISO 4217 CAD)', () => {
		expect(parsePrice('CA$ 129.00', {})).toMatchObject({ ok: true, minor: 12900, currency: 'CAD' });
		expect(parsePrice('CA$129.00', { expectedCurrency: 'CAD' })).toMatchObject({ ok: true, currency: 'CAD' });
		expect(parsePrice('CA$129.00', { expectedCurrency: 'AUD' })).toMatchObject({ ok: false, kind: 'wrong-currency' });
		expect(parsePrice('A$ 129.00', {})).toMatchObject({ ok: true, currency: 'AUD' });
		expect(parsePrice('AU$ 129.00', {})).toMatchObject({ ok: true, currency: 'AUD' });
	});

	it('a symbol of another currency is still wrong-currency when the listing has one configured', () => {
		expect(parsePrice('£129.00', { expectedCurrency: 'EUR' })).toMatchObject({ ok: false, kind: 'wrong-currency' });
		expect(parsePrice('$129', { expectedCurrency: 'EUR' })).toMatchObject({ ok: false, kind: 'wrong-currency' });
		expect(parsePrice('129.00', { currencyText: 'GBP', expectedCurrency: 'EUR' })).toMatchObject({
			ok: false,
			kind: 'wrong-currency'
		});
	});

	it('parsePrice combines code, amount and currency exponent', () => {
		expect(parsePrice('3480', { currencyText: 'JPY', expectedCurrency: 'JPY' })).toMatchObject({
			ok: true,
			minor: 3480,
			currency: 'JPY'
		});
		expect(parsePrice('1.234,56 €', { expectedCurrency: 'EUR' })).toMatchObject({
			ok: true,
			minor: 123456,
			currency: 'EUR'
		});
	});
});
