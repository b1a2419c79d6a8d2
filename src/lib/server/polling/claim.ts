/**
 * Claiming due listings in PostgreSQL so several workers share the work.
 *
 * - A listing is due when next_poll_at <= now or a curator asked for "poll now"
 *   (poll_requested_at set), its lease is free or expired, and its shop is not paused.
 * - Rows are taken with FOR UPDATE SKIP LOCKED and leased (lease_owner, lease_until): a listing
 *   is never polled by two workers at once, and a crashed worker's lease simply runs out.
 * - A shop is worked by one worker at a time (no claims at a shop while another owner holds a live
 *   lease there), and each claim takes at most max_concurrency x CLAIM_DEPTH of its listings. That
 *   is what makes the per-shop concurrency and spacing limits hold across workers, since each
 *   worker's gate is in memory. Claims are serialised by a transaction advisory lock so two workers
 *   cannot both see a shop as free; a claim is one short query, so the lock is cheap.
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import { listingStates, listings, shops, type FeedFormat, type StockState } from '../db/schema';
import type { ApiMapping, OfferSelectors } from '../../feeds';

/** Everything one poll needs about a claimed listing. */
export interface ClaimedListing {
	listingId: number;
	shopId: number;
	shopSlug: string;
	url: string;
	format: FeedFormat;
	selectors?: OfferSelectors;
	apiMapping?: ApiMapping;
	/** The shop's currency: what extractOffer expects to read (ISO 4217). */
	currency: string;
	maxConcurrency: number;
	minSpacingMs: number;
	pollIntervalMinutes: number;
	etag: string | null;
	lastModified: string | null;
	currentPriceMinor: number | null;
	currentCurrency: string | null;
	currentStock: StockState;
	currentSince: Date | null;
	consecutiveFailures: number;
	consecutiveNotFound: number;
	pollRequestedAt: Date | null;
	/** The poller-clock time of the claim. */
	claimedAt: Date;
	leaseOwner: string;
}

/** A stable 64-bit key for the claim lock (any constant works; this one is spelled out). */
const CLAIM_LOCK_KEY = sql`hashtext('scopegrade.poller.claim')`;

export interface ClaimOptions {
	owner: string;
	now: Date;
	limit: number;
	depth: number;
	/** Lease for the first listing of a shop; later ones get more (they wait behind it). */
	leaseBaseMs: number;
	/** Per queued listing: roughly one request's worth of time. */
	leasePerListingMs: number;
	/** Claim only these listings (a "poll now" from code, and tests). Due-ness is still required. */
	onlyListingIds?: number[];
}

/** Claim due listings for `owner`; returns them ready to poll, in polling order. */
export async function claimDue(db: Database, o: ClaimOptions): Promise<ClaimedListing[]> {
	const now = o.now.toISOString();
	const only = o.onlyListingIds;
	const ids = await db.transaction(async (tx) => {
		await tx.execute(sql`select pg_advisory_xact_lock(${CLAIM_LOCK_KEY})`);
		const rows = await tx.execute<{ listing_id: number; rn: number }>(sql`
			with busy as (
				select l.shop_id,
					count(*) filter (where ls.lease_owner = ${o.owner}) as mine,
					count(*) filter (where ls.lease_owner <> ${o.owner}) as theirs
				from listing_state ls
				join listing l on l.id = ls.listing_id
				where ls.lease_until > ${now}::timestamptz
				group by l.shop_id
			),
			-- Per shop, only its next few due listings are looked at and locked (a LATERAL subquery with
			-- LIMIT and SKIP LOCKED), so a claim costs the same with ten or ten thousand due listings
			-- and no shop's backlog can starve the others.
			chosen as (
				select c.listing_id, c.rn, s.min_spacing_ms, s.max_concurrency
				from shop s
				left join busy b on b.shop_id = s.id
				left join shop_poll_state sp on sp.shop_id = s.id
				cross join lateral (
					select x.listing_id, x.next_poll_at, x.poll_requested_at,
						row_number() over (order by (x.poll_requested_at is null), x.next_poll_at, x.listing_id) as rn
					from (
						select ls.listing_id, ls.next_poll_at, ls.poll_requested_at
						from listing_state ls
						join listing l on l.id = ls.listing_id
						where l.shop_id = s.id and l.active and l.delisted_at is null
							-- Shop conditions again here, so paused or busy shops lock nothing.
							and s.active and (sp.paused_until is null or sp.paused_until <= ${now}::timestamptz) and coalesce(b.theirs, 0) = 0
							and (ls.next_poll_at <= ${now}::timestamptz or ls.poll_requested_at is not null)
							and (ls.lease_until is null or ls.lease_until <= ${now}::timestamptz)
							${only ? sql`and ls.listing_id in (${sql.join(only.length ? only.map((id) => sql`${id}`) : [sql`-1`], sql`, `)})` : sql``}
						order by (ls.poll_requested_at is null), ls.next_poll_at, ls.listing_id
						limit greatest(s.max_concurrency * ${o.depth} - coalesce(b.mine, 0), 0)
						for update of ls skip locked
					) x
				) c
				where s.active
					and (sp.paused_until is null or sp.paused_until <= ${now}::timestamptz)
					and coalesce(b.theirs, 0) = 0
				order by c.rn, (c.poll_requested_at is null), c.next_poll_at
				limit ${o.limit}
			)
			update listing_state ls
			set lease_owner = ${o.owner},
				lease_until = ${now}::timestamptz + make_interval(secs => (
					${o.leaseBaseMs} + ceil(chosen.rn::numeric / chosen.max_concurrency) * ${o.leasePerListingMs}
					+ chosen.rn * chosen.min_spacing_ms
				) / 1000.0)
			from chosen
			where ls.listing_id = chosen.listing_id
			returning ls.listing_id, chosen.rn
		`);
		return [...rows].sort((a, b) => Number(a.rn) - Number(b.rn)).map((r) => Number(r.listing_id));
	});
	if (!ids.length) return [];
	const details = await db
		.select({
			listingId: listings.id,
			shopId: shops.id,
			shopSlug: shops.slug,
			url: listings.url,
			format: listings.format,
			listingConfig: listings.feedConfig,
			shopConfig: shops.feedConfig,
			currency: shops.currency,
			maxConcurrency: shops.maxConcurrency,
			minSpacingMs: shops.minSpacingMs,
			pollIntervalMinutes: listings.pollIntervalMinutes,
			etag: listingStates.etag,
			lastModified: listingStates.lastModified,
			currentPriceMinor: listingStates.currentPriceMinor,
			currentCurrency: listingStates.currentCurrency,
			currentStock: listingStates.currentStock,
			currentSince: listingStates.currentSince,
			consecutiveFailures: listingStates.consecutiveFailures,
			consecutiveNotFound: listingStates.consecutiveNotFound,
			pollRequestedAt: listingStates.pollRequestedAt,
			leaseOwner: listingStates.leaseOwner
		})
		.from(listingStates)
		.innerJoin(listings, eq(listings.id, listingStates.listingId))
		.innerJoin(shops, eq(shops.id, listings.shopId))
		.where(and(inArray(listingStates.listingId, ids), eq(listingStates.leaseOwner, o.owner)));
	const byId = new Map(details.map((d) => [d.listingId, d]));
	return ids
		.map((id) => byId.get(id))
		.filter((d): d is NonNullable<typeof d> => !!d)
		.map(({ listingConfig, shopConfig, ...d }) => {
			const config = mergeFeedConfig(shopConfig, listingConfig);
			return { ...d, ...config, leaseOwner: o.owner, claimedAt: o.now };
		});
}

/**
 * The listing's feed config overrides the shop's: { selectors } or { apiMapping }, key by key
 * (a listing may set only its own selectors and keep the shop's API mapping, or the reverse).
 */
export function mergeFeedConfig(
	shopConfig: unknown,
	listingConfig: unknown
): { selectors?: OfferSelectors; apiMapping?: ApiMapping } {
	const pick = (c: unknown) =>
		c && typeof c === 'object' ? (c as { selectors?: OfferSelectors; apiMapping?: ApiMapping }) : {};
	const s = pick(shopConfig);
	const l = pick(listingConfig);
	const out: { selectors?: OfferSelectors; apiMapping?: ApiMapping } = {};
	const selectors = l.selectors ?? s.selectors;
	const apiMapping = l.apiMapping ?? s.apiMapping;
	if (selectors) out.selectors = selectors;
	if (apiMapping) out.apiMapping = apiMapping;
	return out;
}

/** Give back leases this worker still holds (shutdown), so another worker can take over at once. */
export async function releaseLeases(db: Database, owner: string, listingIds?: number[]): Promise<number> {
	const rows = await db
		.update(listingStates)
		.set({ leaseOwner: null, leaseUntil: null })
		.where(
			and(
				eq(listingStates.leaseOwner, owner),
				listingIds ? inArray(listingStates.listingId, listingIds.length ? listingIds : [-1]) : undefined
			)
		)
		.returning({ id: listingStates.listingId });
	return rows.length;
}
