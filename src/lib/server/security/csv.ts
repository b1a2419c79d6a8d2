/**
 * CSV injection (formula injection): a spreadsheet opening an exported file runs any cell that
 * starts with `=`, `+`, `-` or `@` (and tab or carriage return, which some strip first) as a
 * formula. Following the OWASP "CSV Injection" guidance, such a cell gets a leading single
 * quote, and the caller quotes it (RFC 4180) so separators inside cannot open new cells.
 *
 * A plain number (`-12.5`, `+3`) cannot run as a formula, so numbers, and strings that are
 * exactly a decimal number (PostgreSQL `numeric` arrives as a string), stay as they are:
 * readings may be negative.
 */
const FORMULA_START = /^[=+\-@\t\r]/;
const PLAIN_NUMBER = /^[+-]?(?:\d+(?:\.\d+)?|\.\d+)$/;

/** The cell's text as it must be written: neutralised when a spreadsheet would evaluate it. */
export function neutraliseCell(value: string): string {
	if (!FORMULA_START.test(value) || PLAIN_NUMBER.test(value)) return value;
	return `'${value}`;
}

/** True when the text had to be neutralised (the writer must quote it then). */
export function isFormulaLike(value: string): boolean {
	return FORMULA_START.test(value) && !PLAIN_NUMBER.test(value);
}
