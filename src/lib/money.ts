/**
 * Money, the one helper: amounts are integer minor units plus an ISO 4217 code, and every
 * conversion between minor units and what people read or type goes through the currency's ISO
 * 4217 minor-unit digits (its "exponent": JPY 0, USD 2, KWD 3). Pure: browser and server.
 */

/**
 * ISO 4217 minor-unit digits for the currencies we expect, plus a few with 0 or 3 digits so the
 * table is not accidentally "everything is 2". Unknown codes default to 2.
 */
export const MINOR_UNITS: Readonly<Record<string, number>> = {
	USD: 2,
	EUR: 2,
	GBP: 2,
	JPY: 0,
	AUD: 2,
	CAD: 2,
	CHF: 2,
	SEK: 2,
	NOK: 2,
	DKK: 2,
	PLN: 2,
	NZD: 2,
	KRW: 0,
	CZK: 2,
	HUF: 2,
	CNY: 2,
	HKD: 2,
	SGD: 2,
	INR: 2,
	MXN: 2,
	BRL: 2,
	ISK: 0,
	CLP: 0,
	VND: 0,
	BHD: 3,
	KWD: 3,
	JOD: 3,
	OMR: 3,
	TND: 3
};

/** Minor-unit digits for an ISO 4217 code (default 2 for codes not in the table). */
export function minorDigits(currency: string): number {
	return MINOR_UNITS[currency.toUpperCase()] ?? 2;
}

/** True when the string looks like an ISO 4217 alphabetic code we know. */
export function isKnownCurrencyCode(code: string): boolean {
	return Object.prototype.hasOwnProperty.call(MINOR_UNITS, code.toUpperCase());
}

/** Minor units as a number in major units (2499 USD -> 24.99, 3480 JPY -> 3480), e.g. for a chart axis. */
export function toMajor(minor: number, currency: string): number {
	return minor / 10 ** minorDigits(currency);
}

/** Major units (a typed or charted amount) to whole minor units; null when it is not a positive amount. */
export function toMinor(major: number, currency: string): number | null {
	if (!Number.isFinite(major) || major <= 0) return null;
	return Math.round(major * 10 ** minorDigits(currency));
}

/** True when `major` needs no more decimals than the currency has (12.5 EUR yes, 12.505 EUR and 12.5 JPY no). */
export function fitsMinorUnits(major: number, currency: string): boolean {
	const scaled = major * 10 ** minorDigits(currency);
	return Math.abs(scaled - Math.round(scaled)) <= 1e-6;
}

/** Minor units as a plain decimal string, for machines and form fields ("2499" JPY -> "2499", 2499 USD -> "24.99"). */
export function formatMinor(minor: number, currency: string): string {
	const digits = minorDigits(currency);
	if (digits === 0) return String(minor);
	const s = String(Math.abs(minor)).padStart(digits + 1, '0');
	return `${minor < 0 ? '-' : ''}${s.slice(0, -digits)}.${s.slice(-digits)}`;
}

/**
 * Minor units for people, grouped, with the code: "12.90 EUR", "3,480 JPY". Written with string
 * operations on whole minor units (rounded half away from zero, as Intl's default) rather than
 * Intl.NumberFormat, whose first construction in a browser tab loads locale data and blocks the
 * main thread for a noticeable time on a slow phone; tests/unit/money.test.ts checks it against
 * Intl.NumberFormat('en-GB').
 */
export function formatMoney(amountMinor: number, currency: string): string {
	const rounded = Math.round(Math.abs(amountMinor));
	const [whole, fraction] = formatMinor(rounded, currency).split('.');
	const grouped = whole.replace(/\B(?=(\d{3})+$)/g, ',');
	return `${amountMinor < 0 && rounded !== 0 ? '-' : ''}${grouped}${fraction ? `.${fraction}` : ''} ${currency}`;
}
