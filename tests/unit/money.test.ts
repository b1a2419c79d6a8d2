/**
 * The money helper against ISO 4217 (Codes for the representation of currencies), whose list of
 * codes gives each currency's minor unit: JPY 0, KRW 0, ISK 0, USD 2, EUR 2, GBP 2, KWD 3, BHD 3.
 * Intl.NumberFormat's currency data (CLDR, following ISO 4217) is the independent cross-check.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
	fitsMinorUnits,
	formatMinor,
	formatMoney,
	MINOR_UNITS,
	minorDigits,
	toMajor,
	toMinor
} from '../../src/lib/money';

describe('minor digits (ISO 4217 exponent)', () => {
	it.each([
		['JPY', 0],
		['KRW', 0],
		['ISK', 0],
		['USD', 2],
		['EUR', 2],
		['GBP', 2],
		['AUD', 2],
		['KWD', 3],
		['BHD', 3]
	])('%s has %i', (code, digits) => {
		expect(minorDigits(code)).toBe(digits);
		expect(minorDigits(code.toLowerCase())).toBe(digits);
	});

	it('agrees with Intl.NumberFormat (CLDR currency data) for every code in the table', () => {
		// CLDR shows HUF without decimals in everyday use; ISO 4217 keeps its exponent 2, and so do we.
		for (const [code, digits] of Object.entries(MINOR_UNITS).filter(([c]) => c !== 'HUF')) {
			const intl = new Intl.NumberFormat('en', { style: 'currency', currency: code }).resolvedOptions();
			expect(intl.maximumFractionDigits, code).toBe(digits);
		}
	});
});

describe('converting and formatting', () => {
	it('turns minor units into major units and back by the exponent', () => {
		expect(toMajor(2499, 'USD')).toBe(24.99);
		expect(toMajor(3480, 'JPY')).toBe(3480);
		expect(toMajor(1250, 'KWD')).toBe(1.25);
		expect(toMinor(24.99, 'USD')).toBe(2499);
		expect(toMinor(3480, 'JPY')).toBe(3480);
		expect(toMinor(1.25, 'KWD')).toBe(1250);
		expect(toMinor(0, 'EUR')).toBeNull();
		expect(toMinor(-3, 'EUR')).toBeNull();
		expect(toMinor(Number.NaN, 'EUR')).toBeNull();
	});

	it('knows when an amount has more decimals than the currency', () => {
		expect(fitsMinorUnits(12.5, 'EUR')).toBe(true);
		expect(fitsMinorUnits(12.505, 'EUR')).toBe(false);
		expect(fitsMinorUnits(12.5, 'JPY')).toBe(false);
		expect(fitsMinorUnits(1.255, 'KWD')).toBe(true);
	});

	it('writes plain decimals for fields and grouped amounts with the code for people', () => {
		expect(formatMinor(2499, 'USD')).toBe('24.99');
		expect(formatMinor(5, 'EUR')).toBe('0.05');
		expect(formatMinor(3480, 'JPY')).toBe('3480');
		expect(formatMinor(1250, 'KWD')).toBe('1.250');
		expect(formatMoney(123456, 'EUR')).toBe('1,234.56 EUR');
		expect(formatMoney(3480, 'JPY')).toBe('3,480 JPY');
		expect(formatMoney(1250, 'KWD')).toBe('1.250 KWD');
		expect(formatMoney(-123456789, 'USD')).toBe('-1,234,567.89 USD');
		expect(formatMoney(0, 'EUR')).toBe('0.00 EUR');
	});

	// Reference: ECMA-402 Intl.NumberFormat with the en-GB locale (CLDR grouping "#,##0", half-expand
	// rounding), the formatter formatMoney replaced. Amounts are whole or fractional minor units.
	it('groups and rounds as Intl.NumberFormat en-GB does', () => {
		fc.assert(
			fc.property(
				fc.oneof(fc.integer({ min: -1e12, max: 1e12 }), fc.double({ min: -1e9, max: 1e9, noNaN: true })),
				fc.constantFrom(...Object.keys(MINOR_UNITS)),
				(minor, currency) => {
					const digits = minorDigits(currency);
					// half-expand on the minor units themselves, so a binary fraction cannot tip the reference
					const whole = Math.sign(minor) * Math.round(Math.abs(minor));
					const intl = new Intl.NumberFormat('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits });
					const expected = `${intl.format(whole / 10 ** digits)} ${currency}`.replace(/^-(0(\.0+)?) /, '$1 ');
					expect(formatMoney(minor, currency)).toBe(expected);
				}
			),
			{ numRuns: 2000 }
		);
	});
});
