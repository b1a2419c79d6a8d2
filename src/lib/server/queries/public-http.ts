/**
 * HTTP helpers for the open-data API: JSON with a strong ETag and 304 on a matching
 * If-None-Match (RFC 9110 sections 8.8.3 and 13.1.2), 400/404 as RFC 9457 problem details
 * (src/lib/server/http/problem.ts), and CSV (RFC 4180: CRLF line ends, quotes doubled).
 */
import { createHash } from 'node:crypto';
import type { z } from 'zod';
import { invalidInput, problem } from '../http/problem';
import { isFormulaLike, neutraliseCell } from '../security/csv';

/** Licence of Scopegrade's own data (catalogue, grades, readings). */
export const DATA_LICENCE = {
	name: 'CC BY 4.0',
	url: 'https://creativecommons.org/licenses/by/4.0/',
	attribution: 'Scopegrade bench data',
	notice:
		"Scopegrade bench data, licensed CC BY 4.0 (https://creativecommons.org/licenses/by/4.0/). Grades use Scopegrade's own rubric, not a published standard."
} as const;

/** Shared caches may keep public answers briefly; browsers revalidate (ETag, 304) every time. */
export const PUBLIC_CACHE_CONTROL = 'public, max-age=0, s-maxage=5, stale-while-revalidate=30';

const encoder = new TextEncoder();

/**
 * A strong ETag: the SHA-256 of the body's bytes as base64url, cut to 27 characters (162 bits).
 * SvelteKit's rendered pages get the same (patches/@sveltejs+kit+*.patch, render.js).
 */
export function etagOf(body: string | Uint8Array): string {
	const bytes = typeof body === 'string' ? encoder.encode(body) : body;
	return `"${createHash('sha256').update(bytes).digest('base64url').slice(0, 27)}"`;
}

/** Does an If-None-Match header match this ETag (weak comparison, any of a list, or *)? */
export function matchesEtag(header: string | null, etag: string): boolean {
	if (!header) return false;
	if (header.trim() === '*') return true;
	const bare = etag.replace(/^W\//, '');
	return header.split(',').some((t) => t.trim().replace(/^W\//, '') === bare);
}

/** Answer a body with an ETag, or 304 when the client already has it. */
export function cachedResponse(
	request: Request,
	body: string,
	contentType: string,
	extra: Record<string, string> = {}
): Response {
	// encoded once, for the ETag and the response alike
	const bytes = encoder.encode(body);
	const etag = etagOf(bytes);
	const headers: Record<string, string> = {
		ETag: etag,
		'Cache-Control': PUBLIC_CACHE_CONTROL,
		Vary: 'Accept-Encoding',
		...extra
	};
	if (matchesEtag(request.headers.get('if-none-match'), etag)) return new Response(null, { status: 304, headers });
	return new Response(bytes, { status: 200, headers: { 'Content-Type': contentType, ...headers } });
}

export const JSON_TYPE = 'application/json; charset=utf-8';

/** JSON with an ETag. */
export function cachedJson(request: Request, data: unknown, extra: Record<string, string> = {}): Response {
	return cachedResponse(request, JSON.stringify(data), JSON_TYPE, extra);
}

/** 400 problem details (RFC 9457) with the field messages in `errors`. */
export function badRequest(err: z.ZodError, what = 'invalid query parameters'): Response {
	return invalidInput(err, what);
}

export function notFound(what: string): Response {
	return problem(404, `${what} not found`);
}

function csvCell(v: unknown): string {
	if (v === null || v === undefined) return '';
	const raw = typeof v === 'string' ? v : String(v);
	// OWASP CSV injection guidance: a cell a spreadsheet would run as a formula is neutralised and quoted.
	const s = neutraliseCell(raw);
	return isFormulaLike(raw) || /[",;\r\n]/.test(s) || /^\s|\s$/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Rows of flat objects to CSV with a header line, in the key order of `columns`. */
export function toCsv<T extends object>(rows: T[], columns: (keyof T & string)[]): string {
	const lines = [columns.join(',')];
	for (const r of rows) lines.push(columns.map((c) => csvCell(r[c])).join(','));
	return lines.join('\r\n') + '\r\n';
}
