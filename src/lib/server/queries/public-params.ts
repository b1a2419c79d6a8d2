/**
 * Query parameters of the public pages and /api/v1, validated with zod, and the visitor's
 * viewpoint (region and display currency): from the URL when given (and then remembered in
 * cookies), else the cookies, else Accept-Language.
 */
import { z } from 'zod';
import type { Cookies } from '@sveltejs/kit';
import { REGION_CODES, REGION_CURRENCY, regionFromAcceptLanguage, toMinor, type Region } from '../../pricing';
import { BANDS } from '../../components/bands';
import { POWER_KINDS, SORTS, type CatalogueFilter, type FinderInput } from '../../finder';
import type { Viewpoint } from './public';

export const CURRENCIES = [...new Set(Object.values(REGION_CURRENCY))] as readonly string[];
export const REGION_COOKIE = 'sg_region';
export const CURRENCY_COOKIE = 'sg_currency';

/** Form GETs send empty strings for untouched fields: treat them as absent. */
const blank = (v: unknown) => (v === '' || v === null ? undefined : v);
const flag = z.preprocess(
	(v) => (v === undefined || v === '' ? undefined : ['1', 'true', 'on', 'yes'].includes(String(v).toLowerCase())),
	z.boolean().optional()
);
const money = z.preprocess(blank, z.coerce.number().positive('must be a positive amount').max(1e7).optional());

export const regionSchema = z.enum(REGION_CODES);
export const currencySchema = z.enum(CURRENCIES as [string, ...string[]]);
export const bandSchema = z.enum(BANDS);

export const catalogueParams = z.object({
	region: z.preprocess(blank, regionSchema.optional()),
	currency: z.preprocess(blank, currencySchema.optional()),
	band: z.preprocess(blank, bandSchema.optional()),
	min: money,
	max: money,
	stock: flag,
	audio: flag,
	power: z.preprocess(blank, z.enum(POWER_KINDS).optional()),
	sort: z.preprocess(blank, z.enum(SORTS).optional()),
	/** "include expected grades": predictions for unmeasured revisions count in the band filter. */
	expected: flag,
	page: z.preprocess(blank, z.coerce.number().int().min(1).max(10_000).optional())
});
export type CatalogueParams = z.infer<typeof catalogueParams>;

/**
 * The viewpoint alone (region, currency). Built once: zod compiles each schema object on its first
 * parse, so a `.pick()` made per request compiled a new parser on every request.
 */
export const viewpointParams = catalogueParams.pick({ region: true, currency: true });

export const finderParams = z.object({
	region: z.preprocess(blank, regionSchema.optional()),
	currency: z.preprocess(blank, currencySchema.optional()),
	budget: money,
	audio: flag,
	stock: flag,
	band: z.preprocess(blank, bandSchema.optional()),
	expected: flag
});
export type FinderParams = z.infer<typeof finderParams>;

/** Plain object of the first value of each search parameter. */
export function searchObject(url: URL): Record<string, string> {
	const o: Record<string, string> = {};
	for (const [k, v] of url.searchParams) if (!(k in o)) o[k] = v;
	return o;
}

/** zod issues as { path, message } for 400 bodies and form error lists. */
export function issuesOf(err: z.ZodError) {
	return err.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
}

/**
 * The visitor's region and currency. Explicit URL values win and are remembered for a year;
 * then the cookies; then Accept-Language (region) and that region's currency.
 */
export function viewpoint(
	input: { region?: Region; currency?: string },
	cookies: Cookies | null,
	acceptLanguage: string | null
): Viewpoint {
	const cookieRegion = regionSchema.safeParse(cookies?.get(REGION_COOKIE));
	const cookieCurrency = currencySchema.safeParse(cookies?.get(CURRENCY_COOKIE));
	const region: Region =
		input.region ?? (cookieRegion.success ? cookieRegion.data : regionFromAcceptLanguage(acceptLanguage));
	let currency: string;
	if (input.currency) currency = input.currency;
	else if (input.region) currency = REGION_CURRENCY[input.region];
	else currency = cookieCurrency.success ? cookieCurrency.data : REGION_CURRENCY[region];
	if (cookies && (input.region || input.currency)) {
		const opts = { path: '/', maxAge: 60 * 60 * 24 * 365, sameSite: 'lax' as const, httpOnly: false, secure: false };
		cookies.set(REGION_COOKIE, region, opts);
		cookies.set(CURRENCY_COOKIE, currency, opts);
	}
	return { region, currency };
}

/** Catalogue params to the pure filter (prices into minor units of the display currency). */
export function toCatalogueFilter(p: CatalogueParams, currency: string): CatalogueFilter {
	return {
		minBand: p.band,
		priceMin: p.min != null ? (toMinor(p.min, currency) ?? undefined) : undefined,
		priceMax: p.max != null ? (toMinor(p.max, currency) ?? undefined) : undefined,
		inStock: p.stock,
		audio: p.audio,
		power: p.power,
		sort: p.sort ?? 'band',
		includeExpected: p.expected
	};
}

/** Finder params to the pure ranking input. */
export function toFinderInput(p: FinderParams, view: Viewpoint): FinderInput {
	return {
		region: view.region,
		budgetMinor: p.budget != null ? (toMinor(p.budget, view.currency) ?? undefined) : undefined,
		needsAudio: p.audio,
		inStockNow: p.stock,
		minBand: p.band,
		includeExpected: p.expected
	};
}

/**
 * Parse for a page: keep every valid field, drop the invalid ones, and report them so the
 * page can say what it ignored instead of failing the whole view.
 */
export function parseLenient<S extends z.ZodObject>(schema: S, obj: Record<string, string>) {
	const first = schema.safeParse(obj);
	if (first.success) return { data: first.data as z.infer<S>, issues: [] as ReturnType<typeof issuesOf> };
	const bad = new Set(first.error.issues.map((i) => String(i.path[0])));
	const kept = Object.fromEntries(Object.entries(obj).filter(([k]) => !bad.has(k)));
	const second = schema.safeParse(kept);
	return { data: (second.success ? second.data : schema.parse({})) as z.infer<S>, issues: issuesOf(first.error) };
}
