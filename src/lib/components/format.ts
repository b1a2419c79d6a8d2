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
