/**
 * Poller settings in one place. Every value here is a default: createPoller() takes overrides,
 * and tests shrink the timings. The reasons are written beside each number because a crawler's
 * manners live in them.
 */

/** The product token shops match in robots.txt (RFC 9309 section 2.2.1: case-insensitive). */
export const BOT_TOKEN = 'ScopegradeBot';
export const BOT_VERSION = '0.1';

/**
 * The User-Agent we send: product token, version and a page that explains what we fetch and how
 * to reach us (common practice for polite crawlers). `publicBaseUrl` defaults to PUBLIC_BASE_URL.
 */
export function userAgent(publicBaseUrl: string | undefined = process.env.PUBLIC_BASE_URL): string {
	const base = (publicBaseUrl || 'https://scopegrade.invalid').replace(/\/+$/, '');
	return `${BOT_TOKEN}/${BOT_VERSION} (+${base}/learn#polling)`;
}

/** Whole-request budget for one page, redirects included. Shops that take longer are 'timeout'. */
export const REQUEST_TIMEOUT_MS = 10_000;
/** Bodies above this are not read ('too_large'): a product page is far smaller; this guards memory. */
export const MAX_BODY_BYTES = 2 * 1024 * 1024;
/** Redirect hops followed per page (the same figure RFC 9309 2.3.1.2 asks of robots.txt fetches). */
export const MAX_REDIRECTS = 5;

/** Upper bound of the failure backoff; never less than the listing's own interval. */
export const MAX_BACKOFF_MS = 24 * 60 * 60 * 1000;
/** Backoff delays are spread by +/- this share so failed listings of one shop do not retry in a herd. */
export const BACKOFF_JITTER = 0.2;
/** Regular polls are spread by +/- this share for the same reason, but less. */
export const INTERVAL_JITTER = 0.05;
/** Retry-After values beyond this are clamped: a shop cannot park a listing for weeks by accident. */
export const MAX_RETRY_AFTER_MS = 24 * 60 * 60 * 1000;
/** A 429 without Retry-After still pauses the whole shop this long. */
export const DEFAULT_RATE_LIMIT_PAUSE_MS = 5 * 60 * 1000;

/**
 * 404 policy: a 404 is a failure (pages come back after a shop's template fix), and after this many
 * 404s in a row the listing is marked delisted (listing.delisted_at) and polling stops. A 410 Gone
 * (RFC 9110 section 15.5.11: "likely permanent") delists at once. Neither ever writes out_of_stock.
 */
export const NOT_FOUND_DELIST_AFTER = 3;

/**
 * A restock within this long of the listing's previous restock is stored with stock_event.quiet
 * set, so flapping stock does not alert twice (design: Alerts). The alerts module reads the flag.
 */
export const RESTOCK_QUIET_PERIOD_MS = 6 * 60 * 60 * 1000;

/**
 * robots.txt that could not be fetched (5xx, network) means complete disallow (RFC 9309 2.3.1.4);
 * we ask again after this long instead of keeping the error for the full 24 h cache life.
 */
export const ROBOTS_ERROR_RETRY_MS = 10 * 60 * 1000;

/** Listings claimed per claim query (all shops together). */
export const CLAIM_LIMIT = 50;
/** Most poll results written in one transaction (group commit, see write-queue.ts). */
export const WRITE_BATCH = 100;
/**
 * Per shop, a claim takes at most max_concurrency x this many listings, so no shop hogs a batch.
 * Deep enough that a shop's requests keep flowing while earlier results wait for their batched write
 * (a listing stays leased until its result is stored); politeness is the gate's job, not this one's.
 */
export const CLAIM_DEPTH = 8;
