/**
 * One polite GET: manual redirects (each hop checked by the caller: robots.txt, private
 * addresses), a whole-request timeout and a body size cap. Never throws; every way a fetch can
 * end is a value the poller turns into a poll outcome.
 */

export type HopBlock = { outcome: 'robots_disallowed' | 'network'; reason: string };

export interface FetchPageOptions {
	headers: Record<string, string>;
	timeoutMs: number;
	maxBytes: number;
	maxRedirects: number;
	/** Called before every hop (the first URL included); a non-null answer stops the fetch. */
	beforeHop?: (url: URL) => Promise<HopBlock | null>;
	fetchImpl?: typeof fetch;
}

export type FetchOutcome =
	| { kind: 'response'; status: number; headers: Headers; body: string; url: string; redirects: number }
	| { kind: 'timeout'; reason: string }
	| { kind: 'network'; reason: string }
	| { kind: 'too_large'; reason: string }
	| { kind: 'redirects'; reason: string }
	| { kind: 'blocked'; block: HopBlock; url: string };

const REDIRECT_STATUSES = new Set([301, 302, 303, 307, 308]);

/** Fetch `url` following up to `maxRedirects` redirects; only 2xx bodies are read. */
export async function fetchPage(url: string, opts: FetchPageOptions): Promise<FetchOutcome> {
	const doFetch = opts.fetchImpl ?? fetch;
	const controller = new AbortController();
	let timedOut = false;
	const timer = setTimeout(() => {
		timedOut = true;
		controller.abort(new Error(`no complete answer within ${opts.timeoutMs} ms`));
	}, opts.timeoutMs);
	let current: URL;
	try {
		current = new URL(url);
	} catch {
		clearTimeout(timer);
		return { kind: 'network', reason: `not a valid URL: ${url}` };
	}
	try {
		for (let hop = 0; ; hop++) {
			const block = await opts.beforeHop?.(current);
			if (block) return { kind: 'blocked', block, url: current.toString() };
			const res = await doFetch(current, { headers: opts.headers, redirect: 'manual', signal: controller.signal });
			if (REDIRECT_STATUSES.has(res.status)) {
				await res.body?.cancel().catch(() => {});
				const location = res.headers.get('location');
				if (!location) return { kind: 'network', reason: `HTTP ${res.status} redirect without a Location header` };
				if (hop >= opts.maxRedirects)
					return { kind: 'redirects', reason: `more than ${opts.maxRedirects} redirects (last to ${location})` };
				current = new URL(location, current);
				continue;
			}
			if (res.status < 200 || res.status >= 300) {
				await res.body?.cancel().catch(() => {});
				return {
					kind: 'response',
					status: res.status,
					headers: res.headers,
					body: '',
					url: current.toString(),
					redirects: hop
				};
			}
			const declared = Number(res.headers.get('content-length') ?? NaN);
			if (Number.isFinite(declared) && declared > opts.maxBytes) {
				await res.body?.cancel().catch(() => {});
				return { kind: 'too_large', reason: `body of ${declared} bytes exceeds the ${opts.maxBytes}-byte cap` };
			}
			const read = await readCapped(res, opts.maxBytes);
			if (read === null) return { kind: 'too_large', reason: `body exceeds the ${opts.maxBytes}-byte cap` };
			return {
				kind: 'response',
				status: res.status,
				headers: res.headers,
				body: read,
				url: current.toString(),
				redirects: hop
			};
		}
	} catch (err) {
		if (timedOut) return { kind: 'timeout', reason: `no complete answer within ${opts.timeoutMs} ms` };
		return { kind: 'network', reason: describeError(err) };
	} finally {
		clearTimeout(timer);
	}
}

/** Read the body as text, giving up (null) once it passes `maxBytes`. */
async function readCapped(res: Response, maxBytes: number): Promise<string | null> {
	if (!res.body) return '';
	const reader = res.body.getReader();
	const chunks: Uint8Array[] = [];
	let size = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		size += value.byteLength;
		if (size > maxBytes) {
			await reader.cancel().catch(() => {});
			return null;
		}
		chunks.push(value);
	}
	const charset = /charset=["']?([\w-]+)/i.exec(res.headers.get('content-type') ?? '')?.[1];
	let decoder: TextDecoder;
	try {
		decoder = new TextDecoder(charset ?? 'utf-8');
	} catch {
		decoder = new TextDecoder('utf-8');
	}
	return decoder.decode(Buffer.concat(chunks));
}

function describeError(err: unknown): string {
	if (err instanceof Error) {
		const cause = (err as Error & { cause?: { code?: string; message?: string } }).cause;
		return cause?.code
			? `${err.message} (${cause.code})`
			: cause?.message
				? `${err.message}: ${cause.message}`
				: err.message;
	}
	return String(err);
}
