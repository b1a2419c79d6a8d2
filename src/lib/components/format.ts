import { formatMoney } from '$lib/money';

/** Small display helpers for the workspace pages. */
export function when(d: Date | string | null | undefined): string {
	if (!d) return '—';
	const x = typeof d === 'string' ? new Date(d) : d;
	if (Number.isNaN(x.getTime())) return '—';
	return x.toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
}
export function day(d: Date | string | null | undefined): string {
	if (!d) return '—';
	return (typeof d === 'string' ? d : d.toISOString()).slice(0, 10);
}
export function money(minor: number | null | undefined, currency: string | null | undefined): string {
	if (minor === null || minor === undefined || !currency) return '—';
	return formatMoney(minor, currency);
}

/**
 * Number formats for figures (Stat.svelte), one per kind made once: building an Intl.NumberFormat
 * costs about 15 µs, and a bench report shows dozens of figures.
 */
const formats = new Map<string, Intl.NumberFormat>();

/** Up to `digits` fraction digits (default: up to 1); `signed` shows + on positive numbers. */
export function figureFormat(digits: number | undefined, signed: boolean): Intl.NumberFormat {
	const key = `${digits ?? ''}|${signed}`;
	let format = formats.get(key);
	if (!format) {
		format = new Intl.NumberFormat('en', {
			minimumFractionDigits: digits ?? 0,
			maximumFractionDigits: digits ?? 1,
			signDisplay: signed ? 'exceptZero' : 'auto'
		});
		formats.set(key, format);
	}
	return format;
}

/**
 * A deviation with its sign, as the step tables show it: "+0.4", "-1.2", and "0.0" when it rounds
 * to zero (never "-0.0"). An ASCII "-", not U+2212: one character outside Latin-1 makes V8 hold a
 * whole rendered page at two bytes per character, and a page over 128 KiB is then a large object
 * on every request (a converter page of 88k characters: 10-20 % more requests per second without).
 */
export function signedFigure(x: number, digits = 1): string {
	const shown = Math.abs(x).toFixed(digits);
	return `${Number(shown) === 0 ? '' : x > 0 ? '+' : '-'}${shown}`;
}
