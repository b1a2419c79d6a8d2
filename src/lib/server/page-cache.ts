/**
 * HTTP caching of the public guide (pages and the public /api/v1), as one SvelteKit handle.
 *
 * - Anonymous GETs of public paths get an ETag and `Cache-Control: public, max-age=0,
 *   s-maxage=5, stale-while-revalidate=30` (a shared cache may hold them briefly, a browser
 *   revalidates), and 304 on a matching If-None-Match (RFC 9110 sections 8.8.3, 13.1.2).
 * - Their rendered responses are kept in an in-process LRU (lru-cache, bounded in bytes), keyed
 *   by path, query, region and currency. Every change to what public pages show NOTIFYs
 *   `sg_public` in its own transaction (triggers of migration 0006); each instance LISTENs and
 *   drops the whole cache when one arrives, so a change written by the poller, a curator or
 *   another instance is gone from every instance's cache as soon as it commits.
 * - A request with a session cookie is never served from or stored in the cache and its
 *   response is marked `private`; a response that sets a cookie is never stored.
 * Env: PAGE_CACHE=off turns the in-process cache off (headers stay), PAGE_CACHE_MB (32),
 * PAGE_CACHE_TTL_SECONDS (60: bounds how old "last checked" times on a cached page can be).
 */
import { createHash } from 'node:crypto';
import zlib, { brotliCompressSync, gzipSync } from 'node:zlib';
import type { Cookies, Handle } from '@sveltejs/kit';
import { LRUCache } from 'lru-cache';
import { env } from '$env/dynamic/private';
import { building } from '$app/environment';
import { sql } from '$lib/server/db';
import {
	catalogueParams,
	CURRENCY_COOKIE,
	parseLenient,
	REGION_COOKIE,
	viewpoint
} from '$lib/server/queries/public-params';
import { matchesEtag, PUBLIC_CACHE_CONTROL } from '$lib/server/queries/public-http';

/** Public, cookie-independent paths (besides region and currency): pages and the open-data API. */
const PUBLIC_PATH =
	/^\/(?:$|converters(?:\/[^/]+)?$|compare$|finder$|guides(?:\/[^/]+)?$|restocks(?:\/feed\.atom)?$|learn$|about\/data$|api\/v1\/(?:converters(?:\/[^/]+)?|revisions\/[^/]+|listings(?:\/\d+\/history)?|finder|export\/[^/]+|openapi\.json)$)/;
/** Data routes of SvelteKit pages (client-side navigation) follow their page. */
const DATA_SUFFIX = '/__data.json';

const PRIVATE_CACHE_CONTROL = 'private, no-cache';
const VARY = 'Accept-Encoding, Accept-Language, Cookie';

interface Stored {
	status: number;
	headers: [string, string][];
	body: Uint8Array;
	/** Compressed once when stored, so a hit costs no compression (scripts/serve.mjs skips encoded answers). */
	br: Uint8Array;
	gzip: Uint8Array;
	etag: string;
}

/** The encoding to send: brotli when accepted, else gzip, else none (RFC 9110 section 12.5.3, q=0 honoured). */
function pickEncoding(header: string | null): 'br' | 'gzip' | null {
	const accepted = new Map(
		(header ?? '').split(',').map((part) => {
			const [name, ...params] = part.trim().toLowerCase().split(';');
			const q = params.map((x) => x.trim()).find((x) => x.startsWith('q='));
			return [name, q ? Number(q.slice(2)) : 1] as const;
		})
	);
	const ok = (name: string) => (accepted.get(name) ?? accepted.get('*') ?? 0) > 0;
	return ok('br') ? 'br' : ok('gzip') ? 'gzip' : null;
}

const enabled = env.PAGE_CACHE !== 'off';
const EMPTY = new Uint8Array(0);
const cache = new LRUCache<string, Stored>({
	maxSize: Number(env.PAGE_CACHE_MB || 32) * 1024 * 1024,
	sizeCalculation: (v) =>
		v.body.byteLength +
		v.br.byteLength +
		v.gzip.byteLength +
		256 +
		v.headers.reduce((n, [k, x]) => n + k.length + x.length, 0),
	ttl: Number(env.PAGE_CACHE_TTL_SECONDS || 60) * 1000
});
/** Bumped on every invalidation: a render that began before it is not stored. */
let generation = 0;
let listening: Promise<unknown> | null = null;
/** True while the LISTEN connection is up: only then may anything be stored. */
let live = false;

export function invalidatePageCache() {
	generation++;
	cache.clear();
}

/** LISTEN once per process; a reconnect may have missed notifications, so it drops the cache too. */
function listen() {
	if (listening || building || !enabled) return;
	const onListen = () => {
		invalidatePageCache();
		live = true;
	};
	listening = sql
		.listen('sg_public', () => invalidatePageCache(), onListen)
		.catch((err) => {
			listening = null; // try again on the next request
			live = false;
			console.error('page cache: LISTEN sg_public failed; cache stays off until it works', err);
		});
}

function isPublic(path: string): boolean {
	return PUBLIC_PATH.test(path.endsWith(DATA_SUFFIX) ? path.slice(0, -DATA_SUFFIX.length) || '/' : path);
}

/** Auth.js keeps the session in `authjs.session-token` (`__Secure-` prefixed on https, chunked as .0, .1). */
export function hasSession(cookies: Cookies): boolean {
	return cookies.getAll().some((c) => c.name.includes('session-token'));
}

function keyOf(url: URL, cookies: Cookies, acceptLanguage: string | null): string {
	const read = { get: (name: string) => cookies.get(name) } as Cookies;
	const view = viewpoint({}, read, acceptLanguage);
	const query = [...url.searchParams].sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
	return `${url.pathname}?${new URLSearchParams(query)}|${view.region}|${view.currency}`;
}

const etagOf = (body: Uint8Array) => `"${createHash('sha256').update(body).digest('base64url').slice(0, 27)}"`;

/** Auth.js notes the page a visitor came from on every request; a public page can go without it. */
const DROPPABLE_COOKIE = /^(__Secure-)?authjs\.callback-url=/;

/**
 * Pages remember a region or currency picked in the URL in cookies (public-params viewpoint);
 * that is the only cookie a cacheable page may set, and it is set again on every answer.
 */
function onlyViewpointCookies(headers: Headers): boolean {
	return headers
		.getSetCookie()
		.every((c) => c.startsWith(`${REGION_COOKIE}=`) || c.startsWith(`${CURRENCY_COOKIE}=`) || DROPPABLE_COOKIE.test(c));
}

function viewpointCookies(url: URL, cookies: Cookies, acceptLanguage: string | null): string[] {
	const region = url.searchParams.get('region') || undefined;
	const currency = url.searchParams.get('currency') || undefined;
	if (!region && !currency) return [];
	const { data } = parseLenient(catalogueParams.pick({ region: true, currency: true }), {
		...(region && { region }),
		...(currency && { currency })
	});
	const out: string[] = [];
	const recorder = {
		get: (name: string) => cookies.get(name),
		set: (name: string, value: string) => void out.push(`${name}=${value}; Path=/; Max-Age=31536000; SameSite=Lax`)
	} as unknown as Cookies;
	if (data.region || data.currency) viewpoint(data, recorder, acceptLanguage);
	return out;
}

function answer(request: Request, s: Stored, hit: boolean, url: URL, cookies: Cookies): Response {
	const headers = new Headers(s.headers);
	headers.set('X-Page-Cache', hit ? 'hit' : 'miss');
	if (url.pathname.startsWith('/api/') === false)
		for (const c of viewpointCookies(url, cookies, request.headers.get('accept-language')))
			headers.append('Set-Cookie', c);
	if (matchesEtag(request.headers.get('if-none-match'), s.etag)) {
		for (const h of ['content-type', 'content-length']) headers.delete(h);
		return new Response(null, { status: 304, headers });
	}
	const encoding = s.body.byteLength >= 1024 ? pickEncoding(request.headers.get('accept-encoding')) : null;
	if (!encoding || !s.br.byteLength) return new Response(s.body as BodyInit, { status: s.status, headers });
	headers.set('Content-Encoding', encoding);
	return new Response((encoding === 'br' ? s.br : s.gzip) as BodyInit, { status: s.status, headers });
}

export const pageCacheHandle: Handle = async ({ event, resolve }) => {
	const { request, url, cookies } = event;
	if (request.method !== 'GET' || !isPublic(url.pathname)) return resolve(event);
	if (hasSession(cookies)) {
		const response = await resolve(event);
		// The security headers may already say no-store (signed-in HTML); otherwise private.
		if (!response.headers.has('cache-control')) response.headers.set('Cache-Control', PRIVATE_CACHE_CONTROL);
		return response;
	}
	listen();
	// The raw request URL, not event.url: SvelteKit strips `/__data.json` and
	// `x-sveltekit-invalidated` from the latter, and a page and its data answer must not share a key.
	const key = keyOf(new URL(request.url), cookies, request.headers.get('accept-language'));
	const found = enabled ? cache.get(key) : undefined;
	if (found) return answer(request, found, true, url, cookies);

	const started = generation;
	const response = await resolve(event);
	if (response.status !== 200 || !onlyViewpointCookies(response.headers)) return response;
	const body = new Uint8Array(await response.arrayBuffer());
	const stored: Stored = {
		status: response.status,
		headers: [],
		body,
		// With the cache off, scripts/serve.mjs compresses per request instead.
		br: enabled
			? brotliCompressSync(body, {
					params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 5, [zlib.constants.BROTLI_PARAM_SIZE_HINT]: body.byteLength }
				})
			: EMPTY,
		gzip: enabled ? gzipSync(body, { level: 6 }) : EMPTY,
		etag: response.headers.get('etag') ?? etagOf(body)
	};
	const headers = new Headers(response.headers);
	headers.set('ETag', stored.etag);
	headers.set('Cache-Control', PUBLIC_CACHE_CONTROL);
	headers.set('Vary', VARY);
	headers.delete('content-length');
	headers.delete('set-cookie');
	stored.headers = [...headers];
	if (enabled && generation === started && live) cache.set(key, stored);
	return answer(request, stored, false, url, cookies);
};
