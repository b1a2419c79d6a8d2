/**
 * The domain's closed vocabularies, declared once. The database's pgEnums
 * (src/lib/server/db/schema.ts), the zod schemas, the OpenAPI description and the UI's labels
 * all derive from these lists. Plain TypeScript with no `$lib`/`$env` imports, so the schema
 * module, drizzle-kit, jobs and scripts (tsx) can load it too. Order matters: it is the pgEnum's
 * order, and for roles and bands the ranking (roles weakest first, bands best first).
 */

/** Roles in ascending order of power; a higher role can do everything a lower one can. */
export const ROLES = ['member', 'curator', 'admin'] as const;
export type Role = (typeof ROLES)[number];

/** Level-grade bands (Scopegrade's own house rubric, not a published standard), best to worst. */
export const BANDS = ['exact', 'close', 'fair', 'poor', 'failing'] as const;
export type Band = (typeof BANDS)[number];

/** Buying regions a visitor picks and a shop sells from or ships to. */
export const REGIONS = ['na', 'eu', 'uk', 'jp', 'au'] as const;
export type Region = (typeof REGIONS)[number];

/** What a listing's stock looks like to a buyer; schema.org ItemAvailability values map onto these. */
export const STOCK_STATES = ['in_stock', 'out_of_stock', 'preorder', 'backorder', 'discontinued', 'unknown'] as const;
export type StockState = (typeof STOCK_STATES)[number];

/** How a converter is powered. */
export const POWER_KINDS = ['usb-bus', 'usb-adapter', 'barrel'] as const;
export type PowerKind = (typeof POWER_KINDS)[number];

/** How the poller reads a shop's page: JSON-LD, microdata, CSS selectors or a JSON API. */
export const FEED_FORMATS = ['jsonld', 'microdata', 'selectors', 'api'] as const;
export type FeedFormat = (typeof FEED_FORMATS)[number];

/** The load on the converter's output during a bench run (75 ohm is the video standard's). */
export const TERMINATIONS = ['75-ohm', 'unterminated', 'unknown'] as const;
export type Termination = (typeof TERMINATIONS)[number];

/** A buyer's guide's life: drafted, published on /guides, or retired (kept, no longer listed). */
export const GUIDE_STATUSES = ['draft', 'published', 'retired'] as const;
export type GuideStatus = (typeof GUIDE_STATUSES)[number];

/** How a member takes alerts: one e-mail per restock, or a daily digest. */
export const ALERT_MODES = ['instant', 'digest'] as const;
export type AlertMode = (typeof ALERT_MODES)[number];

/** True when `value` is one of `values` (narrows a string from outside to the enum's type). */
export function isOneOf<const T extends readonly string[]>(values: T, value: unknown): value is T[number] {
	return typeof value === 'string' && (values as readonly string[]).includes(value);
}
