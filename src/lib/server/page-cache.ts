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
 * - A burst of visitors costs one render: concurrent misses of one key wait for the first one's
 *   render (single flight), and an entry past its TTL (not an invalidated one: those are gone) is
 *   still served while one request renders it again.
 * - scripts/serve.mjs answers hits before SvelteKit sees the request (`serveCachedHit`, found on
 *   globalThis), so a hit costs about what a static file does.
 * - After an invalidation the pages visitors opened at least 3 times in the last minute (at most
 *   PAGE_CACHE_REWARM, 8, most recent first) are rendered again at once, one at a time, through a loopback request
 *   that scripts/serve.mjs makes (`setRewarmer`): the next visitor finds them rendered, or waits
 *   for the render already running. Renders start after the change committed, so none is stale.
 * Env: PAGE_CACHE=off turns the in-process cache off (headers stay), PAGE_CACHE_MB (32), PAGE_CACHE_REWARM (8),
 * PAGE_CACHE_TTL_SECONDS (60: bounds how old "last checked" times on a cached page can be).
 */
import type { IncomingMessage, ServerResponse } from 'node:http';
import { parse as parseCookies } from 'cookie';
import zlib, { brotliCompressSync, gzipSync } from 'node:zlib';
import type { Cookies, Handle } from '@sveltejs/kit';
import { LRUCache } from 'lru-cache';
import { env } from '$env/dynamic/private';
import { building } from '$app/environment';
import { sql } from '$lib/server/db';
import {
	viewpointParams,
	CURRENCY_COOKIE,
	parseLenient,
	REGION_COOKIE,
	viewpoint
} from '$lib/server/queries/public-params';
import { etagOf, matchesEtag, PUBLIC_CACHE_CONTROL } from '$lib/server/queries/public-http';

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
	ttl: Number(env.PAGE_CACHE_TTL_SECONDS || 60) * 1000,
	// Past its TTL an entry is served stale while one request renders it again (see `fresh`).
	allowStale: true,
	noDeleteOnStaleGet: true
});
/** Renders in progress per key: concurrent misses wait for one render instead of all rendering. */
const flights = new Map<string, Promise<Stored | null>>();
/** Bumped on every invalidation: a render that began before it is not stored. */
let generation = 0;
let listening: Promise<unknown> | null = null;
/** True while the LISTEN connection is up: only then may anything be stored. */
let live = false;

/** How to ask this process for a page again: path with query and the headers its key depends on. */
export interface Replay {
	path: string;
	headers: Record<string, string>;
}
/** Visits within the window before a page counts as busy enough to render again unasked. */
const REWARM_MIN_VISITS = 3;
/** Keys visitors asked for lately, most recent first, with how to render them again. */
const REWARM_WINDOW_MS = 60_000;
const visited = new LRUCache<string, Replay & { visits: number }>({ max: 256, ttl: REWARM_WINDOW_MS });
const REWARM = Number(env.PAGE_CACHE_REWARM ?? 8);
/** Set by scripts/serve.mjs: renders one page through this process's own HTTP server. */
let rewarmer: ((r: Replay) => Promise<void>) | null = null;
/** Marks the loopback requests, so they do not count as visits. */
const REWARM_HEADER = 'x-sg-rewarm';
let rewarming: string[] = [];
let rewarmRunning = false;

export function setRewarmer(fn: ((r: Replay) => Promise<void>) | null) {
	rewarmer = fn;
}

/** One page at a time, so the warm-up never takes more than a share of the CPU from visitors. */
async function rewarmLoop() {
	if (rewarmRunning) return;
	rewarmRunning = true;
	try {
		await rewarmEach();
	} finally {
		rewarmRunning = false;
	}
}

async function rewarmEach() {
	while (rewarming.length && rewarmer) {
		const key = rewarming.shift()!;
		const replay = visited.get(key, { updateAgeOnGet: false });
		if (!replay || cache.has(key) || flights.has(key)) continue;
		try {
			await rewarmer(replay);
		} catch {
			/* a failed warm-up only means the next visitor renders it */
		}
	}
}

export function invalidatePageCache() {
	generation++;
	cache.clear();
	flights.clear(); // renders begun before the change are neither stored nor shared with later visitors
	if (!rewarmer || REWARM <= 0) return;
	rewarming = [...visited.entries()]
		.filter(([, v]) => v.visits >= REWARM_MIN_VISITS)
		.slice(0, REWARM)
		.map(([k]) => k);
	void rewarmLoop();
}

/** Note a visitor's request for `key` (not our own warm-up requests) so an invalidation can render it again. */
function noteVisit(key: string, url: URL, cookie: CookieGet, header: (name: string) => string | null) {
	if (header(REWARM_HEADER)) return;
	const headers: Record<string, string> = { [REWARM_HEADER]: '1' };
	const language = header('accept-language');
	if (language) headers['accept-language'] = language;
	const jar = [REGION_COOKIE, CURRENCY_COOKIE]
		.map((name) => [name, cookie(name)] as const)
		.filter(([, v]) => v)
		.map(([name, v]) => `${name}=${encodeURIComponent(v!)}`);
	if (jar.length) headers.cookie = jar.join('; ');
	const visits = (visited.get(key)?.visits ?? 0) + 1;
	visited.set(key, { path: url.pathname + url.search, headers, visits });
}

/** A stored answer for this key that may be sent now: fresh, or stale while someone renders it again. */
function servable(key: string): Stored | undefined {
	const status: LRUCache.Status<string, Stored> = {};
	const found = cache.get(key, { status });
	if (!found) return undefined;
	return status.get === 'stale' && !flights.has(key) ? undefined : found;
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

/** The cookies the cache looks at, from SvelteKit's jar or a raw Cookie header alike. */
type CookieGet = (name: string) => string | undefined;

function keyOf(url: URL, cookie: CookieGet, acceptLanguage: string | null): string {
	// The open-data API takes its viewpoint from the query and Accept-Language, never from cookies.
	const read = { get: url.pathname.startsWith('/api/') ? () => undefined : cookie } as Cookies;
	const view = viewpoint({}, read, acceptLanguage);
	const query = [...url.searchParams].sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
	return `${url.pathname}?${new URLSearchParams(query)}|${view.region}|${view.currency}`;
}

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

function viewpointCookies(url: URL, cookie: CookieGet, acceptLanguage: string | null): string[] {
	const region = url.searchParams.get('region') || undefined;
	const currency = url.searchParams.get('currency') || undefined;
	if (!region && !currency) return [];
	const { data } = parseLenient(viewpointParams, {
		...(region && { region }),
		...(currency && { currency })
	});
	const out: string[] = [];
	const recorder = {
		get: cookie,
		set: (name: string, value: string) => void out.push(`${name}=${value}; Path=/; Max-Age=31536000; SameSite=Lax`)
	} as unknown as Cookies;
	if (data.region || data.currency) viewpoint(data, recorder, acceptLanguage);
	return out;
}

interface RequestView {
	/** The raw request URL (its pathname and query key the cache). */
	url: URL;
	cookie: CookieGet;
	header: (name: string) => string | null;
}

/** What to send for a stored answer: 304 on a matching ETag, else the body in the encoding asked for. */
function answerParts(
	req: RequestView,
	s: Stored,
	tag: 'hit' | 'miss' | 'shared'
): { status: number; headers: [string, string][]; body: Uint8Array | null } {
	const headers = s.headers.slice();
	headers.push(['x-page-cache', tag]);
	if (!req.url.pathname.startsWith('/api/'))
		for (const c of viewpointCookies(req.url, req.cookie, req.header('accept-language')))
			headers.push(['set-cookie', c]);
	if (matchesEtag(req.header('if-none-match'), s.etag)) {
		return { status: 304, headers: headers.filter(([h]) => h !== 'content-type'), body: null };
	}
	const encoding = s.body.byteLength >= 1024 && s.br.byteLength ? pickEncoding(req.header('accept-encoding')) : null;
	if (encoding) headers.push(['content-encoding', encoding]);
	return { status: s.status, headers, body: encoding === 'br' ? s.br : encoding === 'gzip' ? s.gzip : s.body };
}

function answer(req: RequestView, s: Stored, tag: 'hit' | 'miss' | 'shared'): Response {
	const { status, headers, body } = answerParts(req, s, tag);
	return new Response(body as BodyInit | null, { status, headers });
}

/**
 * The fast path of scripts/serve.mjs: answer a GET from the cache straight on the Node response,
 * before SvelteKit builds a Request (the same checks as pageCacheHandle: public path, no session,
 * same key). False when there is no servable entry; the request then goes through SvelteKit.
 */
export function serveCachedHit(req: IncomingMessage, res: ServerResponse): boolean {
	if (!enabled || !live || req.method !== 'GET' || !req.url) return false;
	// As adapter-node builds the Request URL (origin + raw path), so `//x` stays a path.
	const url = new URL(`http://cache.invalid${req.url}`);
	if (!isPublic(url.pathname)) return false;
	const jar = req.headers.cookie ? parseCookies(req.headers.cookie) : {};
	if (Object.keys(jar).some((name) => name.includes('session-token'))) return false;
	const header = (name: string) => {
		const v = req.headers[name];
		return v == null ? null : Array.isArray(v) ? v.join(', ') : v;
	};
	const view: RequestView = { url, cookie: (name) => jar[name], header };
	const key = keyOf(url, view.cookie, header('accept-language'));
	const found = servable(key);
	if (!found) return false;
	noteVisit(key, url, view.cookie, header);
	const { status, headers, body } = answerParts(view, found, 'hit');
	const out: Record<string, string | string[]> = {};
	for (const [k, v] of headers) {
		if (k === 'set-cookie') out[k] = [...((out[k] as string[] | undefined) ?? []), v];
		else out[k] = v;
	}
	if (body) out['content-length'] = String(body.byteLength);
	res.writeHead(status, out);
	res.end(body ?? undefined);
	return true;
}
(globalThis as Record<symbol, unknown>)[Symbol.for('scopegrade.page-cache')] = { serveCachedHit, setRewarmer };

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
	const view: RequestView = {
		url: new URL(request.url),
		cookie: (name) => cookies.get(name),
		header: (name) => request.headers.get(name)
	};
	if (!enabled) return uncachedAnswer(view, await resolve(event));
	const key = keyOf(view.url, view.cookie, view.header('accept-language'));
	noteVisit(key, view.url, view.cookie, view.header);
	const found = servable(key);
	if (found) return answer(view, found, 'hit');
	const pending = flights.get(key);
	if (pending) {
		const shared = await pending;
		if (shared) return answer(view, shared, 'shared');
	}

	const started = generation;
	let settle!: (s: Stored | null) => void;
	const flight = new Promise<Stored | null>((r) => (settle = r));
	flights.set(key, flight);
	try {
		const response = await resolve(event);
		const stored = await toStored(response, true);
		settle(stored);
		if (!stored) return response;
		if (generation === started && live) cache.set(key, stored);
		return answer(view, stored, 'miss');
	} catch (err) {
		settle(null);
		throw err;
	} finally {
		if (flights.get(key) === flight) flights.delete(key);
	}
};

/** Could this answer be kept: a 200 that sets no cookie but the viewpoint's? */
const cacheable = (response: Response) => response.status === 200 && onlyViewpointCookies(response.headers);

/** The headers a public answer goes out with, whether it was stored or not. */
function publicHeaders(response: Response, etag: string): Headers {
	const headers = new Headers(response.headers);
	headers.set('ETag', etag);
	headers.set('Cache-Control', PUBLIC_CACHE_CONTROL);
	headers.set('Vary', VARY);
	headers.delete('content-length');
	headers.delete('set-cookie');
	return headers;
}

/**
 * With the cache off: the headers and the 304 a stored answer would get, and the body streamed on
 * as it came (scripts/serve.mjs compresses it), not read into memory first. An answer without an
 * ETag of its own is read to compute one.
 */
async function uncachedAnswer(req: RequestView, response: Response): Promise<Response> {
	if (!cacheable(response)) return response;
	const etag = response.headers.get('etag');
	if (!etag) return answer(req, (await toStored(response, false))!, 'miss');
	const stored: Stored = {
		status: response.status,
		headers: [...publicHeaders(response, etag)],
		body: EMPTY,
		br: EMPTY,
		gzip: EMPTY,
		etag
	};
	const { status, headers, body } = answerParts(req, stored, 'miss');
	if (!body) await response.body?.cancel();
	return new Response(body ? response.body : null, { status, headers });
}

/**
 * A rendered answer as the cache keeps it (compressed once when `compress`), or null when it may
 * not be cached: not a 200, or it sets a cookie other than the viewpoint's.
 */
async function toStored(response: Response, compress: boolean): Promise<Stored | null> {
	if (!cacheable(response)) return null;
	const body = new Uint8Array(await response.arrayBuffer());
	const headers = publicHeaders(response, response.headers.get('etag') ?? etagOf(body));
	return {
		status: response.status,
		headers: [...headers],
		body,
		br: compress
			? brotliCompressSync(body, {
					params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 5, [zlib.constants.BROTLI_PARAM_SIZE_HINT]: body.byteLength }
				})
			: EMPTY,
		gzip: compress ? gzipSync(body, { level: 6 }) : EMPTY,
		etag: headers.get('etag')!
	};
}
