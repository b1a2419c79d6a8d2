/**
 * Shop listings in the curator workspace: add one (its URL checked against the shop's
 * host and the private-address rules), read it now without storing anything ("test
 * read"), ask the poller to check it soon ("poll now"), and its settings (polled or not, interval).
 *
 * The poller itself (src/lib/server/polling, jobs/) owns listing_state's poll columns; we
 * only set poll_requested_at and next_poll_at, which it reads.
 */
import { and, asc, eq, sql } from 'drizzle-orm';
import type { z } from 'zod';
import { extractOffer, type ApiMapping, type ExtractResult, type OfferSelectors } from '../../feeds/index';
import { audit, auditedUpdate } from '../audit';
import * as t from '../db/schema';
import { FieldError, isUniqueViolation, type Actor, type Database } from './common';
import { checkFeedUrl, type FeedUrlOptions } from './feed-url';
import { sharedGuardedFetch } from '../security/address';
import type { listingSchema } from './schemas';

type ListingInput = z.infer<typeof listingSchema>;

const LISTING_FIELDS = [
	'shopId',
	'converterId',
	'url',
	'format',
	'feedConfig',
	'pollIntervalMinutes',
	'active'
] as const;
const snap = (row: typeof t.listings.$inferSelect) => Object.fromEntries(LISTING_FIELDS.map((k) => [k, row[k]]));

async function shopOf(db: Database, shopId: number) {
	const [shop] = await db.select().from(t.shops).where(eq(t.shops.id, shopId));
	if (!shop) throw new FieldError('shopId', 'That shop does not exist.');
	return shop;
}

/** Add a listing; refuses URLs off the shop's host or on private addresses. */
export async function createListing(db: Database, actor: Actor, input: ListingInput, urlOptions: FeedUrlOptions = {}) {
	const shop = await shopOf(db, input.shopId);
	const check = await checkFeedUrl(input.url, shop.baseUrl, urlOptions);
	if (!check.ok) throw new FieldError('url', check.reason);
	const [conv] = await db
		.select({ id: t.converters.id })
		.from(t.converters)
		.where(eq(t.converters.id, input.converterId));
	if (!conv) throw new FieldError('converterId', 'That converter does not exist.');
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(t.listings)
				.values({
					shopId: shop.id,
					converterId: input.converterId,
					url: check.url.toString(),
					format: input.format,
					feedConfig: input.feedConfig ? JSON.parse(input.feedConfig) : null,
					pollIntervalMinutes: input.pollIntervalMinutes
				})
				.returning();
			await tx.insert(t.listingStates).values({ listingId: row.id, nextPollAt: new Date() }).onConflictDoNothing();
			await audit(tx, { actorId: actor.id, action: 'created', entity: 'listing', entityId: row.id, after: snap(row) });
			return row;
		});
	} catch (err) {
		if (isUniqueViolation(err)) throw new FieldError('url', 'That page is already listed.', 409);
		throw err;
	}
}

/** Pause or resume a listing, or change how often it is polled. */
export async function updateListing(
	db: Database,
	actor: Actor,
	id: number,
	patch: { active?: boolean; pollIntervalMinutes?: number }
) {
	return auditedUpdate(db, actor, {
		table: t.listings,
		entity: 'listing',
		id,
		fields: LISTING_FIELDS,
		set: () => ({ ...patch, updatedAt: new Date() })
	});
}

/** Ask the poller to check this listing now (it picks up next_poll_at <= now). */
export async function requestPoll(db: Database, actor: Actor, listingId: number, now = new Date()) {
	return db.transaction(async (tx) => {
		const [listing] = await tx.select({ id: t.listings.id }).from(t.listings).where(eq(t.listings.id, listingId));
		if (!listing) throw new FieldError(null, 'That listing does not exist.', 404);
		const [before] = await tx.select().from(t.listingStates).where(eq(t.listingStates.listingId, listingId));
		await tx
			.insert(t.listingStates)
			.values({ listingId, pollRequestedAt: now, nextPollAt: now })
			.onConflictDoUpdate({ target: t.listingStates.listingId, set: { pollRequestedAt: now, nextPollAt: now } });
		await audit(tx, {
			actorId: actor.id,
			action: 'poll-requested',
			entity: 'listing',
			entityId: listingId,
			before: before ? { nextPollAt: before.nextPollAt, pollRequestedAt: before.pollRequestedAt } : null,
			after: { nextPollAt: now, pollRequestedAt: now }
		});
	});
}

export interface TestReadResult {
	url: string;
	status: number | null;
	contentType: string | null;
	bytes: number;
	ms: number;
	truncated: boolean;
	offer: ExtractResult | null;
	error: string | null;
}

const TEST_READ_MAX_BYTES = 2 * 1024 * 1024;
const TEST_READ_TIMEOUT_MS = 10_000;

/** Body as text, stopping at the size cap (a huge page must not fill memory). */
async function readCapped(res: Response, cap: number) {
	const reader = res.body?.getReader();
	if (!reader) return { text: '', bytes: 0, truncated: false };
	const chunks: Uint8Array[] = [];
	let bytes = 0;
	let truncated = false;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		bytes += value.byteLength;
		if (bytes > cap) {
			truncated = true;
			await reader.cancel();
			break;
		}
		chunks.push(value);
	}
	const all = new Uint8Array(chunks.reduce((n, c) => n + c.byteLength, 0));
	let o = 0;
	for (const c of chunks) {
		all.set(c, o);
		o += c.byteLength;
	}
	return { text: new TextDecoder().decode(all), bytes: Math.min(bytes, cap), truncated };
}

/** Selectors or API mapping for a listing: its own feed_config over the shop's. */
export function feedConfigFor(listing: { feedConfig: unknown }, shop: { feedConfig: unknown }) {
	const cfg = ((listing.feedConfig && Object.keys(listing.feedConfig as object).length
		? listing.feedConfig
		: shop.feedConfig) ?? {}) as {
		selectors?: OfferSelectors;
		apiMapping?: ApiMapping;
	};
	return { selectors: cfg.selectors, apiMapping: cfg.apiMapping };
}

/**
 * Fetch the listing's page now and run the same extractOffer the poller runs. Nothing is
 * stored. Redirects are followed by hand (up to 3) so each hop passes the URL check too.
 */
export async function testRead(
	db: Database,
	listingId: number,
	opts: FeedUrlOptions & { fetchImpl?: typeof fetch } = {}
): Promise<TestReadResult> {
	const [row] = await db
		.select({ listing: t.listings, shop: t.shops })
		.from(t.listings)
		.innerJoin(t.shops, eq(t.shops.id, t.listings.shopId))
		.where(eq(t.listings.id, listingId));
	if (!row) throw new FieldError(null, 'That listing does not exist.', 404);
	const started = Date.now();
	const result: TestReadResult = {
		url: row.listing.url,
		status: null,
		contentType: null,
		bytes: 0,
		ms: 0,
		truncated: false,
		offer: null,
		error: null
	};
	// The connection is pinned to the address its own lookup checked (security/address.ts).
	const doFetch = opts.fetchImpl ?? sharedGuardedFetch(opts.allowPrivate ?? false);
	let url = row.listing.url;
	try {
		for (let hop = 0; ; hop++) {
			const check = await checkFeedUrl(url, row.shop.baseUrl, opts);
			if (!check.ok) {
				result.error = check.reason;
				break;
			}
			const res = await doFetch(check.url, {
				redirect: 'manual',
				signal: AbortSignal.timeout(TEST_READ_TIMEOUT_MS),
				headers: {
					'user-agent': 'ScopegradeBot/0.1 (curator test read)',
					accept: 'text/html,application/json;q=0.9,*/*;q=0.5'
				}
			});
			result.url = check.url.toString();
			result.status = res.status;
			result.contentType = res.headers.get('content-type');
			if (res.status >= 300 && res.status < 400 && res.headers.get('location')) {
				if (hop >= 3) {
					result.error = 'More than 3 redirects.';
					break;
				}
				url = new URL(res.headers.get('location')!, check.url).toString();
				continue;
			}
			const body = await readCapped(res, TEST_READ_MAX_BYTES);
			result.bytes = body.bytes;
			result.truncated = body.truncated;
			if (!res.ok) {
				result.error = `The shop answered HTTP ${res.status}${res.status === 429 ? ` (rate limited${res.headers.get('retry-after') ? `, retry after ${res.headers.get('retry-after')}` : ''})` : ''}.`;
				break;
			}
			const { selectors, apiMapping } = feedConfigFor(row.listing, row.shop);
			result.offer = extractOffer({
				body: body.text,
				contentType: result.contentType ?? undefined,
				format: row.listing.format,
				selectors,
				apiMapping,
				expectedCurrency: row.shop.currency
			});
			break;
		}
	} catch (err) {
		const e = err as Error;
		result.error =
			e.name === 'TimeoutError'
				? `No answer within ${TEST_READ_TIMEOUT_MS / 1000} s.`
				: `Could not fetch the page: ${e.message}`;
	}
	result.ms = Date.now() - started;
	return result;
}

/** Listings with their poll state, for the workspace list and the detail page. */
export function listingsWithState(db: Database, filter: { shopId?: number; listingId?: number } = {}) {
	const conds = [];
	if (filter.shopId !== undefined) conds.push(eq(t.listings.shopId, filter.shopId));
	if (filter.listingId !== undefined) conds.push(eq(t.listings.id, filter.listingId));
	return db
		.select({
			id: t.listings.id,
			url: t.listings.url,
			format: t.listings.format,
			active: t.listings.active,
			pollIntervalMinutes: t.listings.pollIntervalMinutes,
			feedConfig: t.listings.feedConfig,
			delistedAt: t.listings.delistedAt,
			shopId: t.shops.id,
			shop: t.shops.name,
			currency: t.shops.currency,
			converterId: t.converters.id,
			converter: sql<string>`${t.converters.brand} || ' ' || ${t.converters.model}`,
			lastCheckedAt: t.listingStates.lastCheckedAt,
			lastSuccessAt: t.listingStates.lastSuccessAt,
			lastOutcome: t.listingStates.lastOutcome,
			lastError: t.listingStates.lastError,
			lastErrorAt: t.listingStates.lastErrorAt,
			consecutiveFailures: t.listingStates.consecutiveFailures,
			nextPollAt: t.listingStates.nextPollAt,
			pollRequestedAt: t.listingStates.pollRequestedAt,
			currentPriceMinor: t.listingStates.currentPriceMinor,
			currentCurrency: t.listingStates.currentCurrency,
			currentStock: t.listingStates.currentStock
		})
		.from(t.listings)
		.innerJoin(t.shops, eq(t.shops.id, t.listings.shopId))
		.innerJoin(t.converters, eq(t.converters.id, t.listings.converterId))
		.leftJoin(t.listingStates, eq(t.listingStates.listingId, t.listings.id))
		.where(conds.length ? and(...conds) : undefined)
		.orderBy(asc(t.shops.name), asc(t.converters.brand), asc(t.converters.model));
}

export async function shopOptions(db: Database) {
	return db
		.select({ id: t.shops.id, label: t.shops.name, baseUrl: t.shops.baseUrl, format: t.shops.defaultFormat })
		.from(t.shops)
		.orderBy(asc(t.shops.name));
}
