/**
 * Money on shop pages: ISO 4217 minor units, currency symbols, and turning price text into an
 * integer amount of minor units. Integers all the way: a float cent is how price history drifts.
 */
import { formatMinor, isKnownCurrencyCode, MINOR_UNITS, minorDigits } from '../money';

// Minor digits and plain decimal formatting live in the one money helper (src/lib/money.ts).
export { formatMinor, isKnownCurrencyCode, MINOR_UNITS, minorDigits };

/**
 * Symbols and local abbreviations, longest first so "A$" wins over "$". A symbol maps to every
 * currency that commonly uses it; the listing's expected currency picks among them.
 */
const SYMBOLS: ReadonlyArray<[string, string[]]> = [
	['US$', ['USD']],
	['AU$', ['AUD']],
	['A$', ['AUD']],
	['CA$', ['CAD']],
	['C$', ['CAD']],
	['NZ$', ['NZD']],
	['HK$', ['HKD']],
	['S$', ['SGD']],
	['R$', ['BRL']],
	['zł', ['PLN']],
	['Kč', ['CZK']],
	['Fr.', ['CHF']],
	['kr.', ['DKK', 'NOK', 'SEK']],
	['kr', ['SEK', 'NOK', 'DKK', 'ISK']],
	['Ft', ['HUF']],
	['€', ['EUR']],
	['£', ['GBP']],
	['￥', ['JPY', 'CNY']],
	['¥', ['JPY', 'CNY']],
	['円', ['JPY']],
	['元', ['CNY']],
	['₩', ['KRW']],
	['₹', ['INR']],
	['$', ['USD', 'AUD', 'CAD', 'NZD', 'MXN', 'HKD', 'SGD']]
];

/** Longest first, so "CA$" is tried before "A$" and "$" (a stable sort keeps the table's order otherwise). */
const SYMBOLS_LONGEST_FIRST = [...SYMBOLS].sort((a, b) => b[0].length - a[0].length);

/**
 * Does `text` contain `symbol` as a symbol of its own? One that starts with a letter must not
 * follow another letter: the "A$" inside "CA$" (Canadian dollars) is not the Australian one.
 */
function containsSymbol(text: string, symbol: string): boolean {
	for (let at = text.indexOf(symbol); at !== -1; at = text.indexOf(symbol, at + 1)) {
		if (!/^\p{L}/u.test(symbol) || at === 0 || !/\p{L}/u.test(text[at - 1])) return true;
	}
	return false;
}

/** The symbol we print for a currency in rendered pages and messages. */
export function currencySymbol(code: string): string {
	switch (code.toUpperCase()) {
		case 'EUR':
			return '€';
		case 'GBP':
			return '£';
		case 'JPY':
			return '¥';
		case 'USD':
			return '$';
		case 'AUD':
			return 'A$';
		case 'CAD':
			return 'C$';
		case 'NZD':
			return 'NZ$';
		case 'KRW':
			return '₩';
		default:
			return code.toUpperCase();
	}
}

export type CurrencyDetection =
	| { found: true; currency: string; source: 'code' | 'symbol'; note?: string }
	| { found: false; ambiguous?: string[]; symbol?: string; reason: string };

/**
 * Find the currency in a piece of text: an ISO 4217 code ("EUR", "eur 12,90") or a symbol
 * ("€", "£", "A$"). An ambiguous symbol such as "$" resolves to the expected currency when that is
 * one of its candidates; otherwise the detection reports the candidates instead of guessing.
 */
export function detectCurrency(text: string, expected?: string): CurrencyDetection {
	const exp = expected?.toUpperCase();
	const trimmed = text.trim();
	// A code first: schema.org priceCurrency is always a code, and codes are unambiguous.
	const codeMatch = trimmed.match(/(?:^|[^A-Za-z])([A-Za-z]{3})(?![A-Za-z])/g);
	if (codeMatch) {
		for (const raw of codeMatch) {
			const code = raw.replace(/[^A-Za-z]/g, '').toUpperCase();
			if (isKnownCurrencyCode(code)) return { found: true, currency: code, source: 'code' };
		}
		// An all-letters value that is not a code we know is still probably meant as a code.
		if (/^[A-Za-z]{3}$/.test(trimmed)) {
			return {
				found: true,
				currency: trimmed.toUpperCase(),
				source: 'code',
				note: `currency code ${trimmed.toUpperCase()} is not in the minor-units table; assuming 2 decimals`
			};
		}
	}
	for (const [symbol, candidates] of SYMBOLS_LONGEST_FIRST) {
		if (!containsSymbol(trimmed, symbol)) continue;
		if (candidates.length === 1) return { found: true, currency: candidates[0], source: 'symbol' };
		if (exp && candidates.includes(exp)) {
			return {
				found: true,
				currency: exp,
				source: 'symbol',
				note: `"${symbol}" read as ${exp}, the listing's currency`
			};
		}
		if (!exp) {
			return {
				found: false,
				ambiguous: candidates,
				symbol,
				reason: `"${symbol}" could be ${candidates.join(', ')}; the listing has no expected currency to decide`
			};
		}
		return {
			found: false,
			ambiguous: candidates,
			symbol,
			reason: `"${symbol}" means ${candidates.join('/')}, not the listing's ${exp}`
		};
	}
	return { found: false, reason: 'no currency code or symbol in the text' };
}

export type AmountParse = { ok: true; minor: number; notes: string[] } | { ok: false; reason: string };

/**
 * Turn price text or a number into integer minor units of `currency` (ISO 4217 exponent).
 *
 * Handles "24.99", "1.234,56 €", "€ 12,90", "£15.95", "¥3,480", "3480", "1,234.56", "1'234.50",
 * "12,-" and plain numbers. A single separator followed by exactly three digits is read as a
 * thousands separator ("¥3,480", "1.234 €") unless the currency itself has three decimals.
 * Text that has no number, or a zero or negative amount, is an error, never a price of 0.
 */
export function parseAmount(input: string | number, currency: string): AmountParse {
	const digits = minorDigits(currency);
	const notes: string[] = [];
	if (typeof input === 'number') {
		if (!Number.isFinite(input)) return { ok: false, reason: `price ${input} is not a finite number` };
		// Via the decimal string, not input * 100: 1.005 * 100 is 100.49999...
		return fromDecimalParts(
			String(input).includes('e') ? input.toFixed(digits + 2) : String(input),
			digits,
			currency,
			notes
		);
	}
	const text = input.normalize('NFKC').trim();
	if (!text) return { ok: false, reason: 'price text is empty' };
	if (/^-|^\(|[\s(]-\s*\d|−/.test(text)) return { ok: false, reason: `price "${text}" is negative` };

	// The first run of digits and separators; spaces count as group separators ("1 234,56").
	const m = text.match(/\d[\d.,'’\u00a0\u202f ]*/);
	if (!m) return { ok: false, reason: `no number in price text "${text}"` };
	// A trailing separator with no decimals after it ("12,-", "12.") just ends the number.
	let num = m[0].replace(/[\s\u00a0\u202f]+$/g, '').replace(/[.,]$/, '');
	num = num.replace(/[\s\u00a0\u202f'’]/g, '');
	if (/^[\d]+$/.test(num)) return fromDecimalParts(num, digits, currency, notes);

	const lastDot = num.lastIndexOf('.');
	const lastComma = num.lastIndexOf(',');
	let intPart: string;
	let fracPart = '';
	if (lastDot >= 0 && lastComma >= 0) {
		// Both present: whichever comes last is the decimal mark.
		const dec = lastDot > lastComma ? '.' : ',';
		const grp = dec === '.' ? ',' : '.';
		const at = num.lastIndexOf(dec);
		intPart = num.slice(0, at);
		fracPart = num.slice(at + 1);
		if (intPart.includes(dec)) return { ok: false, reason: `price "${text}" has more than one decimal mark` };
		if (!validGroups(intPart, grp))
			return { ok: false, reason: `price "${text}" has misplaced "${grp}" group separators` };
		intPart = intPart.split(grp).join('');
	} else {
		const sep = lastDot >= 0 ? '.' : ',';
		const parts = num.split(sep);
		if (parts.length > 2) {
			// "1.234.567": repeated, so it groups thousands.
			if (!validGroups(num, sep)) return { ok: false, reason: `price "${text}" has misplaced "${sep}" separators` };
			intPart = parts.join('');
		} else if (parts[1].length === 3 && digits !== 3) {
			intPart = parts.join('');
			notes.push(`"${sep}" in "${m[0].trim()}" read as a thousands separator`);
		} else {
			intPart = parts[0];
			fracPart = parts[1];
		}
	}
	if (!/^\d+$/.test(intPart) || !/^\d*$/.test(fracPart))
		return { ok: false, reason: `price "${text}" is not a number` };
	return fromDecimalParts(fracPart ? `${intPart}.${fracPart}` : intPart, digits, currency, notes);
}

function validGroups(s: string, sep: string): boolean {
	const groups = s.split(sep);
	return groups[0].length >= 1 && groups[0].length <= 3 && groups.slice(1).every((g) => g.length === 3);
}

/** "24.99" -> 2499 for 2 digits, with string arithmetic so no float rounding creeps in. */
function fromDecimalParts(decimal: string, digits: number, currency: string, notes: string[]): AmountParse {
	const m = decimal.match(/^(\d+)(?:\.(\d*))?$/);
	if (!m) {
		if (/^-/.test(decimal)) return { ok: false, reason: `price ${decimal} is negative` };
		return { ok: false, reason: `price "${decimal}" is not a decimal number` };
	}
	const intPart = m[1];
	let frac = m[2] ?? '';
	let roundUp = false;
	if (frac.length > digits) {
		const extra = frac.slice(digits);
		if (/[^0]/.test(extra)) {
			// A price with more decimals than the currency has (e.g. JPY "3480.5"): round half up, say so.
			roundUp = extra[0] >= '5';
			notes.push(`price ${decimal} has more decimals than ${currency} (${digits}); rounded`);
		}
		frac = frac.slice(0, digits);
	}
	frac = frac.padEnd(digits, '0');
	let minor = Number(intPart + frac);
	if (roundUp) minor += 1;
	if (!Number.isSafeInteger(minor)) return { ok: false, reason: `price ${decimal} is too large` };
	if (minor <= 0) return { ok: false, reason: `price ${decimal} is zero; treating it as unreadable, not free` };
	return { ok: true, minor, notes };
}

export type PriceParse =
	| { ok: true; minor: number; currency: string; notes: string[] }
	| { ok: false; kind: 'no-price' | 'no-currency' | 'wrong-currency' | 'parse'; reason: string };

/**
 * Parse a price with its currency. The currency comes from `currencyText` (a code or symbol in its
 * own field) or, failing that, from a symbol or code inside the price text. A currency other than
 * `expectedCurrency` is a 'wrong-currency' error rather than a price we would convert silently.
 */
export function parsePrice(
	priceText: string | number,
	opts: { currencyText?: string; expectedCurrency?: string } = {}
): PriceParse {
	const expected = opts.expectedCurrency?.toUpperCase();
	let det: CurrencyDetection | undefined;
	if (opts.currencyText && opts.currencyText.trim()) det = detectCurrency(opts.currencyText, expected);
	if ((!det || !det.found) && typeof priceText === 'string') {
		const inText = detectCurrency(priceText, expected);
		if (inText.found || !det) det = inText;
	}
	if (!det || !det.found) {
		if (det && det.ambiguous && expected) {
			return { ok: false, kind: 'wrong-currency', reason: det.reason };
		}
		// A bare amount (no code, no symbol anywhere) on a listing whose currency is configured is
		// read in that currency, and says so; any symbol of another currency is still refused above.
		if (expected && !det?.ambiguous) {
			const amount = parseAmount(priceText, expected);
			if (!amount.ok) return { ok: false, kind: 'parse', reason: amount.reason };
			return {
				ok: true,
				minor: amount.minor,
				currency: expected,
				notes: [
					...amount.notes,
					`no currency shown with the price; read in the listing's configured currency ${expected}`
				]
			};
		}
		return {
			ok: false,
			kind: 'no-currency',
			reason: `no currency found: ${det ? det.reason : 'the price is a bare number and no currency was given'}`
		};
	}
	const currency = det.currency;
	if (expected && currency !== expected) {
		return { ok: false, kind: 'wrong-currency', reason: `price is in ${currency} but the listing expects ${expected}` };
	}
	const amount = parseAmount(priceText, currency);
	if (!amount.ok) return { ok: false, kind: 'parse', reason: amount.reason };
	const notes = [...amount.notes];
	if (det.note) notes.push(det.note);
	return { ok: true, minor: amount.minor, currency, notes };
}
