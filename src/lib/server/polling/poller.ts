/**
 * The poller: claim due listings, fetch each page politely, read the offer, record the result.
 *
 *   const poller = createPoller(db, { onStockEvents });
 *   await poller.drain({ budgetMs: 25_000 });   // what the cron task runs
 *
 * One poller is one worker: its robots.txt cache and per-shop gate live in its memory, its leases
 * carry its workerId. Several workers (processes, or pollers with their own pools) share the
 * listings through the claim query (claim.ts).
 */
import { randomUUID } from 'node:crypto';
import { hostname } from 'node:os';
import type { Database } from '../db/client';
import type { PollOutcome } from '../db/schema';
import { extractOffer } from '../../feeds';
import { formatMinor } from '../../feeds';
import { claimDue, releaseLeases, type ClaimedListing } from './claim';
import {
	CLAIM_DEPTH,
	CLAIM_LIMIT,
	WRITE_BATCH,
	DEFAULT_RATE_LIMIT_PAUSE_MS,
	MAX_BODY_BYTES,
	MAX_REDIRECTS,
	REQUEST_TIMEOUT_MS,
	userAgent
} from './config';
import { ShopGate } from './gate';
import { fetchPage, type HopBlock } from './http';
import { assertFetchable } from './net';
import { sharedGuardedFetch } from '../security/address';
import { recordPolls, type PollResult, type PollVerdict, type StockEventsHook } from './record';
import { createWriteQueue } from './write-queue';
import { createPlanner } from './plan';
import { createCardRefresher } from './cards';
import { RobotsCache } from './robots';
import { parseRetryAfter } from './schedule';

export interface PollerOptions {
	/** Lease owner name; defaults to host:pid:random. */
	workerId?: string;
	/** The clock every stored time follows (tests inject one). Real time still paces requests. */
	clock?: () => Date;
	/** Jitter source in [0, 1); 0.5 means no jitter. */
	random?: () => number;
	userAgent?: string;
	timeoutMs?: number;
	maxBodyBytes?: number;
	maxRedirects?: number;
	/** Listings per claim. */
	claimLimit?: number;
	/** Per shop per claim: max_concurrency x claimDepth. */
	claimDepth?: number;
	/** Fetch loopback and private addresses (only for the fake shops); defaults to FEED_ALLOW_PRIVATE=true. */
	allowPrivate?: boolean;
	restockQuietMs?: number;
	/**
	 * Runs inside the transaction that writes an observation and its stock events (restock, sellout,
	 * price_drop), with those events. Undefined by default; the alerts module plugs in here to write
	 * its outbox rows atomically with the change.
	 */
	onStockEvents?: StockEventsHook;
	/**
	 * 'adaptive' spreads each shop's polls by who waits for what ($lib/poll-plan, polling/plan.ts) at the
	 * same requests per shop; 'fixed' (default) polls every listing on its own interval.
	 */
	schedule?: 'fixed' | 'adaptive';
	/** Most polls written in one transaction (write-queue.ts); 1 writes each poll on its own. */
	writeBatch?: number;
	fetchImpl?: typeof fetch;
	log?: (line: string) => void;
}

export interface RunSummary {
	claimed: number;
	polled: number;
	changed: number;
	events: number;
	byOutcome: Partial<Record<PollOutcome, number>>;
	skipped: number;
	ms: number;
}

export interface Poller {
	readonly workerId: string;
	readonly userAgent: string;
	readonly robots: RobotsCache;
	/** Claim up to `limit` due listings for this worker. */
	claim(limit?: number, onlyListingIds?: number[]): Promise<ClaimedListing[]>;
	/** Fetch, read and record one claimed listing. Never throws. */
	pollClaimed(listing: ClaimedListing): Promise<PollResult>;
	/** One claim and its polls. */
	runOnce(): Promise<RunSummary>;
	/** Claim and poll until nothing is due or `budgetMs` of real time has passed (then finish what is in flight). */
	drain(opts?: { budgetMs?: number }): Promise<RunSummary>;
	/** Poll one listing now if it is due or requested and not leased elsewhere; null when it could not be claimed. */
	pollListing(listingId: number): Promise<PollResult | null>;
	/** Give back this worker's unexpired leases (on shutdown). */
	release(): Promise<number>;
}

/** Create a poller (one worker) over `db`. */
export function createPoller(db: Database, options: PollerOptions = {}): Poller {
	const workerId = options.workerId ?? `${hostname()}:${process.pid}:${randomUUID().slice(0, 8)}`;
	const clock = options.clock ?? (() => new Date());
	const random = options.random ?? Math.random;
	const ua = options.userAgent ?? userAgent();
	const timeoutMs = options.timeoutMs ?? REQUEST_TIMEOUT_MS;
	const maxBytes = options.maxBodyBytes ?? MAX_BODY_BYTES;
	const maxRedirects = options.maxRedirects ?? MAX_REDIRECTS;
	const claimLimit = options.claimLimit ?? CLAIM_LIMIT;
	const claimDepth = options.claimDepth ?? CLAIM_DEPTH;
	const allowPrivate = options.allowPrivate ?? process.env.FEED_ALLOW_PRIVATE === 'true';
	// Every connection (page, redirect hop, robots.txt) goes to an address checked in its own lookup.
	const fetchImpl = options.fetchImpl ?? sharedGuardedFetch(allowPrivate);
	const log = options.log ?? (() => {});
	const gate = new ShopGate();
	const planner = options.schedule === 'adaptive' ? createPlanner(db, clock, log) : null;
	const cards = createCardRefresher(db, log);
	const writer = createWriteQueue(async (batch) => {
		const results = await recordPolls(db, batch, {
			random,
			restockQuietMs: options.restockQuietMs,
			onStockEvents: options.onStockEvents,
			intervalFor: planner ? (c, stock) => planner.intervalFor(c.listingId, stock) ?? c.pollIntervalMinutes : undefined
		});
		if (results.some((r) => !r.skipped && (r.changed || r.delisted))) cards.request();
		return results;
	}, options.writeBatch ?? WRITE_BATCH);
	/** Which gate lane an origin's requests use: the shop's, once we have seen a listing there. */
	const lanes = new Map<string, { id: number; maxConcurrency: number; minSpacingMs: number }>();

	const checkUrl = async (url: URL): Promise<HopBlock | null> => {
		try {
			await assertFetchable(url, allowPrivate);
			return null;
		} catch (err) {
			return { outcome: 'network', reason: err instanceof Error ? err.message : String(err) };
		}
	};

	const robots = new RobotsCache({
		userAgent: ua,
		timeoutMs,
		now: () => clock().getTime(),
		checkUrl,
		fetchImpl,
		schedule: (origin, fn) => {
			const lane = lanes.get(origin);
			return lane ? gate.run(lane.id, lane, fn) : gate.run(origin, { maxConcurrency: 1, minSpacingMs: 1000 }, fn);
		}
	});

	const robotsBlock = async (url: URL): Promise<HopBlock | null> => {
		const verdict = await robots.check(url);
		return verdict.allowed
			? null
			: { outcome: 'robots_disallowed', reason: `robots.txt of ${url.origin}: ${verdict.reason}` };
	};

	async function fetchAndRead(c: ClaimedListing, now: Date): Promise<PollVerdict> {
		let first: URL;
		try {
			first = new URL(c.url);
		} catch {
			return { kind: 'failure', outcome: 'network', detail: `listing URL is not valid: ${c.url}` };
		}
		lanes.set(first.origin, { id: c.shopId, maxConcurrency: c.maxConcurrency, minSpacingMs: c.minSpacingMs });
		// The first hop's checks run before we take a slot at the shop: robots.txt is fetched through
		// the same gate, and waiting for it while holding the only slot would deadlock.
		const block = (await checkUrl(first)) ?? (await robotsBlock(first));
		if (block) return { kind: 'failure', outcome: block.outcome, detail: block.reason };

		const headers: Record<string, string> = {
			'User-Agent': ua,
			Accept: c.format === 'api' ? 'application/json, */*;q=0.5' : 'text/html, application/xhtml+xml;q=0.9, */*;q=0.5'
		};
		if (c.etag) headers['If-None-Match'] = c.etag;
		if (c.lastModified) headers['If-Modified-Since'] = c.lastModified;

		const res = await gate.run(c.shopId, c, () =>
			fetchPage(c.url, {
				headers,
				timeoutMs,
				maxBytes,
				maxRedirects,
				fetchImpl,
				beforeHop: async (url) => (url.href === first.href ? null : ((await checkUrl(url)) ?? (await robotsBlock(url))))
			})
		);

		switch (res.kind) {
			case 'blocked':
				return {
					kind: 'failure',
					outcome: res.block.outcome,
					detail: `redirect to ${res.url} refused: ${res.block.reason}`
				};
			case 'timeout':
				return { kind: 'failure', outcome: 'timeout', detail: res.reason };
			case 'too_large':
				return { kind: 'failure', outcome: 'too_large', detail: res.reason };
			case 'network':
			case 'redirects':
				return { kind: 'failure', outcome: 'network', detail: res.reason };
		}
		const status = res.status;
		if (status === 304) {
			return { kind: 'not_modified', detail: 'HTTP 304: unchanged since the last read' };
		}
		if (status >= 200 && status < 300) {
			const offer = extractOffer({
				body: res.body,
				contentType: res.headers.get('content-type') ?? undefined,
				format: c.format,
				selectors: c.selectors,
				apiMapping: c.apiMapping,
				expectedCurrency: c.currency
			});
			if (!offer.ok) {
				// A missing currency is a page we cannot read fully, so 'unreadable'; a different currency
				// (a shop switching region or geo-pricing) is its own outcome so curators can tell.
				const outcome = offer.kind === 'wrong-currency' ? 'wrong_currency' : 'unreadable';
				return { kind: 'failure', outcome, detail: `${offer.kind}: ${offer.reason}` };
			}
			const via = res.redirects ? ` (via ${res.redirects} redirect${res.redirects > 1 ? 's' : ''} to ${res.url})` : '';
			return {
				kind: 'ok',
				priceMinor: offer.priceMinor,
				currency: offer.currency,
				stock: offer.stock,
				etag: res.headers.get('etag'),
				lastModified: res.headers.get('last-modified'),
				detail: `${offer.priceMinor === null || offer.currency === null ? 'no price' : `${formatMinor(offer.priceMinor, offer.currency)} ${offer.currency}`}, ${offer.stock}${via}${offer.notes.length ? `; ${offer.notes.join('; ')}` : ''}`
			};
		}
		if (status === 404 || status === 410) {
			return {
				kind: 'failure',
				outcome: 'gone',
				detail:
					status === 410
						? 'HTTP 410 Gone: the shop removed the page; listing delisted'
						: `HTTP 404 Not Found (${c.consecutiveNotFound + 1} in a row)`,
				notFound: status === 404,
				goneForGood: status === 410
			};
		}
		if (status === 429 || status === 503) {
			const retryAt = parseRetryAfter(res.headers.get('retry-after'), now, res.headers.get('date'));
			const detail = `HTTP ${status}${retryAt ? `, Retry-After until ${retryAt.toISOString()}` : ''}`;
			if (status === 429) {
				const until = retryAt ?? new Date(now.getTime() + DEFAULT_RATE_LIMIT_PAUSE_MS);
				return { kind: 'failure', outcome: 'rate_limited', detail, retryAt: until, pauseShopUntil: until };
			}
			return {
				kind: 'failure',
				outcome: 'http_5xx',
				detail,
				retryAt: retryAt ?? undefined,
				pauseShopUntil: retryAt ?? undefined
			};
		}
		return { kind: 'failure', outcome: status >= 500 ? 'http_5xx' : 'http_4xx', detail: `HTTP ${status}` };
	}

	async function pollClaimed(c: ClaimedListing): Promise<PollResult> {
		const now = clock();
		let verdict: PollVerdict;
		try {
			verdict = await fetchAndRead(c, now);
		} catch (err) {
			// A bug of ours must not leave a lease hanging or look like a shop change.
			verdict = {
				kind: 'failure',
				outcome: 'network',
				detail: `poller error: ${err instanceof Error ? err.message : String(err)}`
			};
		}
		const result = await writer.push({ c, verdict, now });
		if (result.skipped)
			log(`poller ${workerId}: listing ${c.listingId} ${result.skipped}${result.error ? `: ${result.error}` : ''}`);
		return result;
	}

	const claim = async (limit = claimLimit, onlyListingIds?: number[]) => {
		await planner?.refresh();
		return claimDue(db, {
			owner: workerId,
			now: clock(),
			limit,
			depth: claimDepth,
			onlyListingIds,
			// Robots.txt plus the page, each bounded by the timeout, plus slack.
			leaseBaseMs: 2 * timeoutMs + 30_000,
			leasePerListingMs: timeoutMs
		});
	};

	const emptySummary = (): RunSummary => ({
		claimed: 0,
		polled: 0,
		changed: 0,
		events: 0,
		byOutcome: {},
		skipped: 0,
		ms: 0
	});
	const add = (s: RunSummary, r: PollResult) => {
		s.polled++;
		if (r.skipped) s.skipped++;
		else s.byOutcome[r.outcome] = (s.byOutcome[r.outcome] ?? 0) + 1;
		if (r.changed) s.changed++;
		s.events += r.events.length;
	};

	return {
		workerId,
		userAgent: ua,
		robots,
		claim,
		pollClaimed,
		async runOnce() {
			const t0 = performance.now();
			const s = emptySummary();
			const batch = await claim();
			s.claimed = batch.length;
			for (const r of await Promise.all(batch.map(pollClaimed))) add(s, r);
			await cards.flush();
			s.ms = Math.round(performance.now() - t0);
			return s;
		},
		async drain({ budgetMs = 25_000 } = {}) {
			const t0 = performance.now();
			const s = emptySummary();
			const inflight = new Set<Promise<void>>();
			const lowWater = Math.max(1, Math.floor(claimLimit / 2));
			for (;;) {
				if (performance.now() - t0 < budgetMs && inflight.size < lowWater) {
					const batch = await claim(claimLimit - inflight.size);
					s.claimed += batch.length;
					for (const c of batch) {
						const p: Promise<void> = pollClaimed(c).then((r) => {
							add(s, r);
							inflight.delete(p);
						});
						inflight.add(p);
					}
					// Nothing claimable and nothing running: done. With polls running, a finished one may
					// free a shop's claim slots, so wait for one and ask again.
					if (!batch.length && !inflight.size) break;
					if (batch.length && inflight.size < lowWater) continue;
				}
				if (!inflight.size) break;
				await Promise.race(inflight);
			}
			await cards.flush();
			s.ms = Math.round(performance.now() - t0);
			return s;
		},
		async pollListing(listingId) {
			const [c] = await claim(1, [listingId]);
			if (!c) return null;
			const result = await pollClaimed(c);
			await cards.flush();
			return result;
		},
		release: () => releaseLeases(db, workerId)
	};
}
