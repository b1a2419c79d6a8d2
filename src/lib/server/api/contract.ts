/**
 * The /api/v1 contract: every route's method, auth, inputs (the very zod schemas its handler
 * parses with) and answers. The OpenAPI description (./openapi.ts) is generated from this
 * table, and tests/unit/openapi.test.ts checks that every `+server.ts` under
 * src/routes/api/v1 is in it. Free of `$lib`/`$env`, so tests and scripts load it.
 */
import { z } from 'zod';
import { apiWatchSchema } from '../alerts/watches';
import { HISTORY_RANGES } from '../queries/history';
import { catalogueParams, currencySchema, finderParams, regionSchema } from '../queries/public-params';

const SLUG_PATTERN = /^[a-z0-9]+(-[a-z0-9]+)*$/;
/** A positive PostgreSQL integer id, as the `int` param matcher (src/params/int.ts) admits. */
const idSchema = z.coerce.number().int().positive().max(2_147_483_647);

// ------------------------------------------------------------------ inputs parsed by the routes

/** GET /converters and /converters/{slug}: the visitor's viewpoint, nothing else. */
export const converterQuery = catalogueParams.pick({ region: true, currency: true }).strict();

/** GET /converters: a page at a time (default 100 converters, by name). */
export const converterListQuery = catalogueParams
	.pick({ region: true, currency: true, page: true })
	.extend({ limit: z.coerce.number().int().min(1).max(500).optional() })
	.strict();

/** GET /listings */
export const listingsQuery = z
	.object({
		converter: z
			.string({ error: 'converter (a converter slug) is required' })
			.regex(SLUG_PATTERN, 'must be a converter slug'),
		region: regionSchema.optional(),
		currency: currencySchema.optional()
	})
	.strict();

/** GET /listings/{id}/history */
export const listingHistoryPath = z.object({ id: idSchema });
export const listingHistoryQuery = z.object({
	range: z.enum(HISTORY_RANGES).default('90d'),
	points: z.coerce.number().int().min(10).max(1000).default(300)
});

/** GET /curate/shops/health */
export const shopHealthQuery = z.object({ days: z.coerce.number().int().min(1).max(90).default(7) });

/** DELETE /watches/{id}: digits only, no leading zero (as before the route table existed). */
export const watchPath = z.object({
	id: z
		.string()
		.regex(/^[1-9][0-9]{0,9}$/)
		.transform(Number)
		.pipe(z.number().int().positive().max(2_147_483_647))
});

/** Path parameters of the public read routes. */
export const converterPath = z.object({ slug: z.string().max(120).regex(SLUG_PATTERN) });
export const revisionPath = z.object({ id: idSchema });
export const EXPORT_FILES = ['catalogue.csv', 'catalogue.json', 'readings.csv', 'readings.json'] as const;
export const exportPath = z.object({ file: z.enum(EXPORT_FILES) });

// ------------------------------------------------------------------ the route table

export type Method = 'get' | 'post' | 'delete';
export type Auth = 'public' | 'member' | 'curator';

export interface ApiOperation {
	/** OpenAPI path under /api/v1, with `{param}` segments. */
	path: string;
	method: Method;
	summary: string;
	auth: Auth;
	params?: z.ZodObject;
	query?: z.ZodObject;
	body?: z.ZodType;
	/** Success status and body: a components/schemas name, or a media type with a plain description. */
	ok: {
		status: 200 | 201 | 204;
		schema?: string;
		media?: Record<string, object>;
		description: string;
		cached?: boolean;
	};
	/** Error statuses besides those the auth level implies (401, 403). */
	errors: Array<400 | 404>;
}

export const API_OPERATIONS: ApiOperation[] = [
	{
		path: '/converters',
		method: 'get',
		summary:
			'Live converters by name with revisions, bands and the best offer in a region, a page at a time (page, limit; default 100)',
		auth: 'public',
		query: converterListQuery,
		ok: { status: 200, schema: 'ConverterList', description: 'Converter list', cached: true },
		errors: [400]
	},
	{
		path: '/converters/{slug}',
		method: 'get',
		summary: "One converter with its revisions' level reports and listings",
		auth: 'public',
		params: converterPath,
		query: converterQuery,
		ok: { status: 200, schema: 'ConverterDetail', description: 'Converter', cached: true },
		errors: [400, 404]
	},
	{
		path: '/revisions/{id}',
		method: 'get',
		summary: 'One revision with its accepted bench runs and level reports',
		auth: 'public',
		params: revisionPath,
		ok: { status: 200, schema: 'RevisionDetail', description: 'Revision', cached: true },
		errors: [404]
	},
	{
		path: '/listings',
		method: 'get',
		summary: "Current state of a converter's listings",
		auth: 'public',
		query: listingsQuery,
		ok: { status: 200, schema: 'ListingList', description: 'Listings', cached: true },
		errors: [400, 404]
	},
	{
		path: '/listings/{id}/history',
		method: 'get',
		summary: "A listing's price and stock change points (downsampled) with its 30- and 90-day figures",
		auth: 'public',
		params: listingHistoryPath,
		query: listingHistoryQuery,
		ok: { status: 200, schema: 'ListingHistory', description: 'History' },
		errors: [400, 404]
	},
	{
		path: '/finder',
		method: 'get',
		summary: 'Converters ranked for a region, budget and needs, explained in words',
		auth: 'public',
		query: finderParams,
		ok: { status: 200, schema: 'FinderAnswer', description: 'Ranked results', cached: true },
		errors: [400]
	},
	{
		path: '/export/{file}',
		method: 'get',
		summary: 'Open data exports (CC BY 4.0)',
		auth: 'public',
		params: exportPath,
		ok: {
			status: 200,
			description: 'The export',
			media: {
				'text/csv': { schema: { type: 'string' } },
				'application/json': { schema: { type: 'object', description: 'The rows with their licence and count' } }
			},
			cached: true
		},
		errors: [404]
	},
	{
		path: '/openapi.json',
		method: 'get',
		summary: 'This description (OpenAPI 3.1)',
		auth: 'public',
		ok: {
			status: 200,
			description: 'The OpenAPI document',
			media: { 'application/json': { schema: { type: 'object' } } },
			cached: true
		},
		errors: []
	},
	{
		path: '/watches',
		method: 'get',
		summary: "The signed-in member's watches",
		auth: 'member',
		ok: { status: 200, schema: 'WatchList', description: 'Watches' },
		errors: []
	},
	{
		path: '/watches',
		method: 'post',
		summary: 'Watch a converter (any revision, or revisions at or above a band); 200 when the watch already existed',
		auth: 'member',
		body: apiWatchSchema,
		ok: { status: 201, schema: 'WatchCreated', description: 'The watch' },
		errors: [400]
	},
	{
		path: '/watches/{id}',
		method: 'delete',
		summary: 'Stop a watch of yours',
		auth: 'member',
		params: watchPath,
		ok: { status: 204, description: 'Deleted' },
		errors: [400, 404]
	},
	{
		path: '/curate/summary',
		method: 'get',
		summary: 'Curator work queues: what waits for review and what is stale',
		auth: 'curator',
		ok: { status: 200, schema: 'CuratorSummary', description: 'Summary' },
		errors: []
	},
	{
		path: '/curate/shops/health',
		method: 'get',
		summary: 'Per-shop polling health over the last days',
		auth: 'curator',
		query: shopHealthQuery,
		ok: { status: 200, schema: 'ShopHealth', description: 'Shop health' },
		errors: [400]
	}
];
