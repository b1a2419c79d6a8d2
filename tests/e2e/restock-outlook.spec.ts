/**
 * Restock outlook and shop record as buyers see them, on the demo scenario that `npm test` seeds
 * (90 days of generated history): the public shop page `/shops/[slug]`, the outlook line and shop
 * line on a converter page's listing rows, GET /api/v1/listings, and the watch page. The figures
 * are computed by the server's own queries on the same database (queries/shops.ts) and must be
 * what the pages print; the Kaplan-Meier arithmetic itself is checked in tests/unit/restock.test.ts.
 */
import { expect, test, type Page } from '@playwright/test';
import { and, eq, isNull } from 'drizzle-orm';
import { createDb } from '../../src/lib/server/db/client';
import { converters, listings, shops } from '../../src/lib/server/db/schema';
import { listingNotes, listingOutlooks, shopRecords } from '../../src/lib/server/queries/shops';
import { formatSpan } from '../../src/lib/restock';
import { listingListJson } from '../../src/lib/server/api/listing-json';
import { SHOPS } from '../../src/lib/demo/scenario';
import { expectAccessible, expectNoSidewaysScroll, screenshot } from './support/guide-pages';
import { signIn } from './support/inbox';

const { db, sql } = createDb(process.env.DATABASE_URL!, { max: 2 });
test.afterAll(async () => {
	await sql.end({ timeout: 5 });
});

const pct = (x: number | null) => (x === null ? '—' : `${Math.round(x * 100)} %`);
const squash = (s: string | null) => (s ?? '').replace(/\s+/g, ' ').trim();

/** Active listings with what their rows say (outlook text, shop line), computed by the server's queries. */
async function listingsWithNotes() {
	const rows = await db
		.select({
			id: listings.id,
			converterSlug: converters.slug,
			shopSlug: shops.slug,
			shopRegion: shops.region
		})
		.from(listings)
		.innerJoin(converters, eq(converters.id, listings.converterId))
		.innerJoin(shops, eq(shops.id, listings.shopId))
		.where(and(eq(listings.active, true), isNull(listings.delistedAt)));
	const notes = await listingNotes(
		db,
		rows.map((r) => r.id)
	);
	return rows.map((r) => ({ ...r, outlook: notes.get(r.id)!.outlook.text, shopLine: notes.get(r.id)!.shop.line }));
}

async function openShopPage(page: Page, slug: string) {
	const res = await page.goto(`/shops/${slug}`);
	expect(res?.status(), `/shops/${slug}`).toBe(200);
}

test.describe('shop page', () => {
	test('every demo shop shows its record as the server computes it', async ({ page }) => {
		expect(SHOPS.length).toBeGreaterThanOrEqual(5);
		let withGap = 0;
		let withOutlooks = 0;
		for (const s of SHOPS) {
			await openShopPage(page, s.slug);
			const [shop] = await db.select({ id: shops.id }).from(shops).where(eq(shops.slug, s.slug));
			const record = (await shopRecords(db, { shopIds: [shop.id] })).get(shop.id)!;
			await expect(page.getByRole('heading', { level: 1 })).toHaveText(s.name);
			if (record.line) await expect(page.getByTestId('shop-record-line')).toHaveText(`In short: ${record.line}.`);
			else await expect(page.getByTestId('shop-record-line')).toHaveCount(0);

			const figures = page.getByTestId('shop-record');
			const figure = (label: string) => figures.locator('div').filter({ has: page.locator('dt', { hasText: label }) });
			const gap =
				record.medianRestockGapMs === null ? 'too few restocks to say' : formatSpan(record.medianRestockGapMs);
			if (record.medianRestockGapMs !== null) withGap++;
			await expect(figure('Usual wait for a restock').locator('dd').first()).toHaveText(gap);
			await expect(figure('Usual wait for a restock')).toContainText(`median of ${record.restockSpells} sold-out`);
			await expect(figure('Time in stock').locator('dd').first()).toHaveText(pct(record.inStockShare));
			await expect(figure('Listings removed').locator('dd').first()).toHaveText(String(record.delistings));
			await expect(figure('Price changes')).toContainText(`(${record.listings} listing`);
			await expect(figure('Failed polls').locator('dd').first()).toHaveText(/^(\d+ %|—)$/);

			// Its listings, each with its own outlook when it has enough history to say something.
			const own = await db
				.select({ id: listings.id })
				.from(listings)
				.where(and(eq(listings.shopId, shop.id), eq(listings.active, true), isNull(listings.delistedAt)));
			const outlooks = await listingOutlooks(
				db,
				own.map((l) => l.id)
			);
			await expect(page.getByTestId('shop-listings').locator('li')).toHaveCount(own.length);
			const listText = squash(await page.getByTestId('shop-listings').textContent());
			for (const o of outlooks.values()) {
				if (!o.text) continue;
				withOutlooks++;
				// "for 9 days" may have rounded over between the page and this query: compare the rest.
				expect(listText).toContain(o.text.replace(/^.*?\. /, ''));
			}
		}
		// The demo history is rich enough that the checks above were not all about empty figures.
		expect(withGap).toBeGreaterThan(0);
		expect(withOutlooks).toBeGreaterThan(0);
	});

	test('an unknown shop is a 404, and so is a malformed slug', async ({ page }) => {
		expect((await page.goto('/shops/no-such-shop'))?.status()).toBe(404);
		expect((await page.goto('/shops/Not_A_Slug'))?.status()).toBe(404);
	});

	test('is accessible and fits a phone', async ({ browser }) => {
		const slug = SHOPS[1].slug;
		for (const [label, width] of [
			['desktop', 1280],
			['phone', 360]
		] as const) {
			const ctx = await browser.newContext({ viewport: { width, height: 900 } });
			const page = await ctx.newPage();
			await openShopPage(page, slug);
			await page.waitForLoadState('networkidle');
			if (label === 'phone') await expectNoSidewaysScroll(page, `/shops/${slug} at ${width}px`);
			await expectAccessible(page, `/shops/${slug} (${label})`);
			await screenshot(page, `shop-${label}`);
			await ctx.close();
		}
	});
});

test('a converter page shows each listing row its outlook and its shop line, as the listings API does', async ({
	page
}) => {
	const all = await listingsWithNotes();
	const withOutlook = all.filter((l) => l.outlook);
	expect(withOutlook.length, 'demo listings with an outlook').toBeGreaterThan(0);
	const target = withOutlook[0];
	const rows = all.filter((l) => l.converterSlug === target.converterSlug);

	const res = await page.goto(`/converters/${target.converterSlug}?region=${target.shopRegion}`);
	expect(res?.status()).toBe(200);
	for (const l of rows) {
		const row = page.locator(`tr[data-listing="${l.id}"]`);
		await expect(row).toHaveCount(1);
		if (l.outlook) await expect(row.getByTestId('restock-outlook')).toContainText(l.outlook.replace(/^.*?\. /, ''));
		else await expect(row.getByTestId('restock-outlook')).toHaveCount(0);
		if (l.shopLine) await expect(row.getByTestId('shop-line')).toHaveText(l.shopLine);
		await expect(row.locator(`a[href="/shops/${l.shopSlug}"]`)).toHaveCount(1);
	}

	// The same notes in the API, in the shape its OpenAPI description gives (the same zod schema).
	const api = await page.request.get(`/api/v1/listings?converter=${target.converterSlug}`);
	expect(api.status()).toBe(200);
	const body = listingListJson.parse(await api.json());
	const fromApi = body.listings.find((l) => l.id === target.id)!;
	expect(fromApi.outlook?.text).toContain(target.outlook!.replace(/^.*?\. /, ''));
	expect(fromApi.outlook!.restock.spells + fromApi.outlook!.sellout.spells).toBeGreaterThanOrEqual(3);
	expect(fromApi.shopRecord).toEqual({ line: target.shopLine, page: `/shops/${target.shopSlug}` });
	const spec = await (await page.request.get('/api/v1/openapi.json')).json();
	expect(Object.keys(spec.components.schemas.ListingList.properties.listings.items.properties)).toEqual(
		expect.arrayContaining(['outlook', 'shopRecord'])
	);
});

test('the watch page shows the outlooks of a watched converter', async ({ page }) => {
	test.setTimeout(90_000);
	const target = (await listingsWithNotes()).find((l) => l.outlook)!;
	await signIn(page, 'outlook-e2e@scopegrade.test');
	const made = await page.request.post('/api/v1/watches', { data: { converterSlug: target.converterSlug } });
	expect([200, 201]).toContain(made.status());
	await page.goto('/account/watches');
	const outlooks = page.getByTestId('watch-outlooks');
	await expect(outlooks).toContainText(target.outlook!.replace(/^.*?\. /, ''));
	await expect(outlooks.locator(`a[href="/shops/${target.shopSlug}"]`).first()).toBeVisible();
	await screenshot(page, 'watch-outlooks');
});
