/**
 * Public guide journeys against the seeded demo (src/lib/demo/scenario.ts). Which demo
 * converters match a filter is worked out from the scenario in the comments beside each check.
 */
import { expect, test } from '@playwright/test';
import {
	distinctColours,
	expectAccessible,
	expectNoSidewaysScroll,
	paintedPixels,
	screenshot
} from './support/guide-pages';

const slugsOn = async (page: import('@playwright/test').Page, list: string) =>
	page.locator(`[data-testid=${list}] > li`).evaluateAll((els) => els.map((e) => e.getAttribute('data-slug')));

test.describe('catalogue', () => {
	test('filtering to in stock, Close or better, EU, with audio gives exactly the Beam Bridge and the RGB Porter', async ({
		page
	}) => {
		// EU is served by Kanalhaus (EU) and Thamesbit (UK, ships to the EU). In stock there with
		// audio out: Beam Bridge (Exact), Scanlet (rev A Close, but shops stopped sending it on
		// 2025-08-31; rev B, sold now, Failing), Loop RGB (Poor), Beam Bridge Pro (Fair), RGB
		// Porter (revisions A Poor and B Close, both shipping) and Component Kit (Fair).
		// Close or better on what ships today: the Beam Bridge, then the RGB Porter.
		await page.goto('/converters');
		await expect(page.getByTestId('result-count')).toHaveText('14 of 14 converters');
		const form = page.getByRole('form', { name: 'Filter converters' });
		await form.getByLabel('Region', { exact: true }).selectOption('eu');
		await expect(page).toHaveURL(/region=eu/);
		await form.getByLabel('Currency', { exact: true }).selectOption('EUR');
		await form.getByLabel('Band', { exact: true }).selectOption('close');
		await expect(page).toHaveURL(/band=close/);
		await form.getByLabel('In stock now in my region', { exact: true }).check();
		await expect(page).toHaveURL(/stock=1/);
		await form.getByLabel('Audio out', { exact: true }).check();
		await expect(page).toHaveURL(/audio=1/);
		await expect(page.getByTestId('result-count')).toHaveText('2 of 14 converters');
		expect(await slugsOn(page, 'catalogue')).toEqual(['vantacove-beam-bridge', 'halvecraft-rgb-porter']);

		// The view is in the URL: shared, it shows the same list.
		const shared = page.url();
		const other = await page.context().newPage();
		await other.goto(shared);
		expect(await slugsOn(other, 'catalogue')).toEqual(['vantacove-beam-bridge', 'halvecraft-rgb-porter']);
		await other.close();

		// Any band: the Scanlet appears, with both revisions' bands visible and the older one marked.
		await form.getByLabel('Band', { exact: true }).selectOption('');
		await expect(page.getByTestId('result-count')).toHaveText('6 of 14 converters');
		const scanlet = page.locator('[data-slug=brisling-scanlet]');
		await expect(scanlet.locator('[data-band=close]')).toHaveCount(1);
		await expect(scanlet.locator('[data-band=failing]')).toHaveCount(1);
		await expect(scanlet).toContainText('older units, until 2025-08-31');
		await expect(scanlet).toContainText('Changed chip');
		// Kanalhaus sells the Scanlet for 11.90 EUR (scenario LISTINGS).
		await expect(scanlet.getByTestId('best-price')).toHaveText('11.90 EUR');
	});

	test('works without JavaScript, sorts by price, and remembers the region in a cookie', async ({ browser }) => {
		const ctx = await browser.newContext({
			javaScriptEnabled: false,
			locale: 'en-US',
			extraHTTPHeaders: { 'Accept-Language': 'en-US' }
		});
		const page = await ctx.newPage();
		await page.goto('/converters');
		// Accept-Language en-US -> North America, USD.
		await expect(page.getByText('Prices for North America, in USD')).toBeVisible();
		await page.getByLabel('Region', { exact: true }).selectOption('jp');
		await page.getByLabel('Currency', { exact: true }).selectOption('JPY');
		await page.getByLabel('Sort by', { exact: true }).selectOption('price');
		await page.getByRole('button', { name: 'Show converters' }).click();
		await expect(page).toHaveURL(/sort=price/);
		// Kumo Parts (JP): Q-Cast Mini 1,280 JPY, Beam Bridge 3,480 JPY in stock; Phosphor One on backorder.
		const first = page.locator('[data-testid=catalogue] > li').first();
		await expect(first).toHaveAttribute('data-slug', 'quillfen-q-cast-mini');
		await expect(first.getByTestId('best-price')).toHaveText('1,280 JPY');
		await page.goto('/converters');
		await expect(page.getByText('Prices for Japan, in JPY')).toBeVisible();
		await ctx.close();
	});
});

test.describe('converter page', () => {
	test('opens from a page that hydrated, as does the catalogue: the router fetches their data', async ({ page }) => {
		// Their HTML carries no page data (src/lib/render-only.ts); a data request must still get it.
		const errors: string[] = [];
		page.on('pageerror', (e) => errors.push(String(e)));
		await page.goto('/finder');
		await page.waitForLoadState('networkidle');
		const pick = page.locator('main a[href^="/converters/"]').first();
		const slug = (await pick.getAttribute('href'))!.replace('/converters/', '');
		const data = page.waitForResponse((r) => r.url().includes(`/converters/${slug}/__data.json`));
		await pick.click();
		expect((await data).status()).toBe(200);
		await expect(page).toHaveURL(new RegExp(`/converters/${slug}$`));
		await expect(page.getByTestId('revision').first()).toBeVisible();
		await expect(page.getByRole('heading', { name: 'Where to buy now' })).toBeVisible();

		await page.goto('/finder');
		await page.waitForLoadState('networkidle');
		const catalogueData = page.waitForResponse((r) => r.url().includes('/converters/__data.json'));
		await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Converters' }).click();
		expect((await catalogueData).status()).toBe(200);
		await expect(page.getByTestId('result-count')).toContainText('converters');
		await expect(page.locator('[data-testid=catalogue] > li').first()).toBeVisible();
		expect(errors).toEqual([]);
	});

	test('draws the level chart, shows findings, what-if, preview, listings and switches history range', async ({
		page
	}) => {
		// Served as HTML with islands: no SvelteKit start script, only the theme switch and the islands' loader.
		const loaded: string[] = [];
		page.on('request', (r) => r.resourceType() === 'script' && loaded.push(new URL(r.url()).pathname));
		await page.goto('/converters/brisling-scanlet');
		await expect(page.getByRole('heading', { level: 1, name: 'Scanlet' })).toBeVisible();
		await expect(page.getByTestId('last-reviewed')).not.toHaveText('never');
		await page.waitForLoadState('networkidle');
		expect(loaded.filter((p) => !p.startsWith('/_app/immutable/chunks/')).sort()).toEqual([
			'/_app/islands.js',
			'/enhance.js'
		]);
		expect(loaded.length).toBeLessThanOrEqual(3); // and the module preload helper
		expect(await page.locator('[data-island][data-mounted]').count()).toBe(0);
		const revB = page.locator('[data-testid=revision][data-revision=B]');
		await expect(revB.getByTestId('findings')).toContainText('Shadows too dark');
		await expect(revB.getByTestId('run-count')).toContainText('Graded from 2 bench runs');

		// Chart code loads only when the section is reached.
		const chart = revB.locator('[data-testid=level-chart]');
		await expect(chart).toHaveCount(0);
		await revB.getByLabel('Level chart for revision B').scrollIntoViewIfNeeded();
		await expect(chart).toHaveAttribute('data-ready', 'true');
		const canvas = chart.locator('canvas');
		expect(await paintedPixels(canvas)).toBeGreaterThan(2000);
		expect(await distinctColours(canvas)).toBeGreaterThan(4);
		await revB.getByRole('button', { name: 'Deviation' }).click();
		await expect(revB.getByRole('button', { name: 'Deviation' })).toHaveAttribute('aria-pressed', 'true');

		// Step table: 11 steps with mV, deviation and dE00, in the page but closed until opened.
		await expect(revB.getByTestId('step-table')).toBeHidden();
		await revB.getByText('Step table').click();
		await expect(revB.getByTestId('step-table').locator('tbody tr')).toHaveCount(11);
		await revB.getByText(/^Bench runs/).click();
		await expect(revB.getByTestId('bench-runs').locator('li')).toHaveCount(2);

		// What-if re-analyses in the browser: a +5 IRE lift changes the predicted readings.
		await revB.getByText('What if the source changed its levels?').click();
		const whatIf = revB.getByTestId('whatif');
		const before = await whatIf.getByTestId('whatif-band').innerText();
		await whatIf.getByLabel(/Black lift/).fill('5');
		await expect(whatIf.getByText('+5.0 IRE')).toBeVisible();
		await expect(whatIf.getByText('Best per-channel correction')).toBeVisible();
		expect(typeof before).toBe('string');

		await revB.getByLabel('Picture preview for revision B').scrollIntoViewIfNeeded();
		const preview = revB.getByTestId('preview-output');
		await expect(preview).toBeVisible();
		expect(await distinctColours(preview)).toBeGreaterThan(8);

		// Every listing with a nofollow link out.
		const links = page.getByTestId('listings').getByRole('link', { name: /Go to shop/ });
		await expect(links).toHaveCount(3);
		await expect(links.first()).toHaveAttribute('rel', 'nofollow noopener');

		// History: fetched in the browser; switching range fetches again.
		await page.getByRole('heading', { name: 'Price and stock history' }).scrollIntoViewIfNeeded();
		const history = page.getByTestId('history');
		await expect(history).toHaveAttribute('data-status', 'ready');
		await history.getByRole('button', { name: '1 year' }).click();
		await expect(history).toHaveAttribute('data-range', '1y');
		await expect(history).toHaveAttribute('data-status', 'ready');
		await history.getByRole('button', { name: '30 days' }).click();
		await expect(history).toHaveAttribute('data-range', '30d');
		await expect(history).toHaveAttribute('data-status', 'ready');

		// Signed out: the watch button is a sign-in link that comes back here.
		const watch = page.locator('[data-converter-slug=brisling-scanlet]');
		await expect(watch).toHaveAttribute('href', '/signin?next=%2Fconverters%2Fbrisling-scanlet');
	});

	test('without JavaScript the closed sections still hold their content', async ({ browser }) => {
		const context = await browser.newContext({ javaScriptEnabled: false });
		const page = await context.newPage();
		await page.goto('/converters/brisling-scanlet');
		const revB = page.locator('[data-testid=revision][data-revision=B]');
		await revB.getByText('Step table').click();
		await expect(revB.getByTestId('step-table').locator('tbody tr')).toHaveCount(11);
		await revB.getByText(/^Bench runs/).click();
		await expect(revB.getByTestId('bench-runs').locator('li')).toHaveCount(2);
		await context.close();
	});

	test('an unknown or malformed slug is a 404', async ({ page }) => {
		expect((await page.goto('/converters/no-such-box'))?.status()).toBe(404);
		expect((await page.goto('/converters/Bad_Slug'))?.status()).toBe(404);
	});
});

test('finder ranks and explains as the visitor changes inputs', async ({ page }) => {
	await page.goto('/finder');
	const form = page.getByRole('form', { name: 'Your needs' });
	await form.getByLabel('Region', { exact: true }).selectOption('eu');
	await form.getByLabel('Currency', { exact: true }).selectOption('EUR');
	await form.getByLabel('Audio out', { exact: true }).check();
	await form.getByLabel('In stock now', { exact: true }).check();
	await form.getByLabel('Lowest acceptable band', { exact: true }).selectOption('close');
	// In stock in the EU with audio, Close or better on what ships today: Beam Bridge 22.90 EUR,
	// then the RGB Porter (its revision B is Close).
	await expect(page.getByTestId('finder-count')).toHaveText('2 matches');
	expect(await slugsOn(page, 'finder-results')).toEqual(['vantacove-beam-bridge', 'halvecraft-rgb-porter']);
	await expect(page.getByTestId('explanation').first()).toHaveText(
		'Exact band; in stock at 1 shop in your region; lowest 22.90 EUR.'
	);
	// Any band: six match (Beam Bridge, Scanlet, Loop RGB, Beam Bridge Pro, RGB Porter, Component Kit).
	await form.getByLabel('Lowest acceptable band', { exact: true }).selectOption('');
	await expect(page.getByTestId('finder-count')).toHaveText('6 matches');
	await form.getByLabel('Budget', { exact: true }).fill('20');
	await expect(page.getByTestId('finder-count')).toHaveText('2 matches');
	await expect(page).toHaveURL(/budget=20/);
	await page.reload();
	await expect(page.getByTestId('finder-count')).toHaveText('2 matches');
});

test('compare two converters side by side with overlaid curves', async ({ page }) => {
	await page.goto('/compare?c=vantacove-beam-bridge');
	await page.getByLabel('Add a converter', { exact: true }).selectOption('brisling-scanlet');
	await page.getByRole('button', { name: 'Add' }).click();
	await expect(page).toHaveURL(/\/compare\?c=vantacove-beam-bridge,brisling-scanlet$/);
	const chart = page.getByTestId('compare-chart');
	await expect(chart).toHaveAttribute('data-ready', 'true');
	expect(await paintedPixels(chart.locator('canvas'))).toBeGreaterThan(2000);
	// Compare opens on the deviation view; the shared toggle switches to levels.
	const views = page.getByRole('group', { name: 'Chart view' });
	await expect(views.getByRole('button', { name: 'Deviation' })).toHaveAttribute('aria-pressed', 'true');
	await views.getByRole('button', { name: 'Levels' }).click();
	await expect(views.getByRole('button', { name: 'Levels' })).toHaveAttribute('aria-pressed', 'true');
	await expect(views.getByRole('button', { name: 'Deviation' })).toHaveAttribute('aria-pressed', 'false');
	const head = page.getByTestId('compare-table').locator('thead th');
	await expect(head).toHaveCount(3);
	await page.getByRole('link', { name: 'Remove Vantacove Beam Bridge' }).click();
	await expect(page).toHaveURL(/\/compare\?c=brisling-scanlet$/);
});

test('restocks list and Atom feed', async ({ page, request }) => {
	await page.goto('/restocks');
	await expect(page.getByTestId('restocks').locator('li').first()).toBeVisible();
	const res = await request.get('/restocks/feed.atom');
	expect(res.status()).toBe(200);
	expect(res.headers()['content-type']).toContain('application/atom+xml');
	const xml = await res.text();
	expect(xml).toContain('<feed xmlns="http://www.w3.org/2005/Atom">');
	expect(xml).toMatch(/<entry>\s*<id>tag:scopegrade\.test,2026:restock:\d+<\/id>/);
	expect(xml).toContain('Wattle &amp; Wire');
});

test('the demo guide shows live picks, one unbuyable and one re-graded; learn shows the rubric and the cautions', async ({
	page
}) => {
	await page.goto('/guides');
	await expect(page.getByTestId('no-guides')).toHaveCount(0);
	await page.getByRole('link', { name: 'A first converter for a CRT' }).first().click();
	await expect(page.getByRole('heading', { level: 1, name: 'A first converter for a CRT' })).toBeVisible();
	// Linecaster S: discontinued at Northbay, sold out at Thamesbit; Scanlet: picked Close, now Failing.
	await expect(page.locator('[data-pick=pellamy-linecaster-s] [data-flag=unbuyable]')).toBeVisible();
	await expect(page.locator('[data-pick=brisling-scanlet] [data-flag=regraded]')).toContainText(
		'Close then, Failing now'
	);
	await expect(
		page.locator('[data-pick=orrinford-tubelink-duo]').getByRole('img', { name: /^Level grade: Exact · \d\.\d IRE/ })
	).toBeVisible();
	await page.goto('/learn');
	await expect(page.getByTestId('rubric').locator('tbody tr')).toHaveCount(5);
	await expect(page.locator('#polling')).toBeVisible();
	await expect(page.getByText('ScopegradeBot')).toBeVisible();
	await expect(page.locator('#safety')).toBeVisible();
	await expect(page.getByText(/lethal voltages inside even when it is unplugged/)).toBeVisible();
});

const PAGES = [
	['converters', '/converters'],
	['converter', '/converters/brisling-scanlet'],
	['compare', '/compare?c=vantacove-beam-bridge,brisling-scanlet'],
	['finder', '/finder?region=eu&audio=1'],
	['guides', '/guides'],
	['restocks', '/restocks'],
	['learn', '/learn'],
	['about-data', '/about/data']
] as const;

test.describe('every public page', () => {
	for (const [name, path] of PAGES) {
		test(`${name}: accessible, fits a phone, screenshots in both themes`, async ({ browser }) => {
			test.setTimeout(180_000); // four page loads with axe each, on the 14-converter demo
			for (const scheme of ['light', 'dark'] as const) {
				for (const [label, width] of [
					['desktop', 1280],
					['phone', 360]
				] as const) {
					const ctx = await browser.newContext({ viewport: { width, height: 900 }, colorScheme: scheme });
					const page = await ctx.newPage();
					const res = await page.goto(path);
					expect(res?.status()).toBe(200);
					await page.waitForLoadState('networkidle');
					if (label === 'phone') await expectNoSidewaysScroll(page, `${name} at ${width}px`);
					if (label === 'desktop' || scheme === 'light') await expectAccessible(page, `${name} (${scheme}, ${label})`);
					if (scheme === 'light' || label === 'desktop')
						await screenshot(page, `${name}-${label}${scheme === 'dark' ? '-dark' : ''}`);
					await ctx.close();
				}
			}
		});
	}
});

test('chart code loads only on pages that draw charts', async ({ page }) => {
	// A message Chart.js 4 carries in its bundle (it survives minification): marks its chunk.
	const MARK = 'Failed to create chart';
	const chartLoaded = async (path: string) => {
		const bodies: Promise<string>[] = [];
		const onResponse = (r: import('@playwright/test').Response) => {
			if (r.request().resourceType() === 'script') bodies.push(r.text().catch(() => ''));
		};
		page.on('response', onResponse);
		await page.goto(path);
		await page.waitForLoadState('networkidle');
		page.off('response', onResponse);
		return (await Promise.all(bodies)).some((t) => t.includes(MARK));
	};
	expect(await chartLoaded('/converters')).toBe(false);
	expect(await chartLoaded('/finder')).toBe(false);
	// A converter page fetches chart code only once the visitor moves to a chart, even one in the first screen.
	const bodies: Promise<string>[] = [];
	page.on('response', (r) => {
		if (r.request().resourceType() === 'script') bodies.push(r.text().catch(() => ''));
	});
	await page.goto('/converters/brisling-scanlet');
	await page.waitForLoadState('networkidle');
	expect((await Promise.all(bodies)).some((t) => t.includes(MARK))).toBe(false);
	await page.getByLabel('Level chart for revision A').scrollIntoViewIfNeeded();
	await page.mouse.wheel(0, 200);
	await expect(page.locator('[data-testid=level-chart]').first()).toHaveAttribute('data-ready', 'true');
	expect((await Promise.all(bodies)).some((t) => t.includes(MARK))).toBe(true);
});

test('a chart in the first screen draws once the pointer moves, without a scroll', async ({ page }) => {
	await page.goto('/converters/brisling-scanlet');
	await page.waitForLoadState('networkidle');
	await expect(page.locator('[data-testid=level-chart]')).toHaveCount(0);
	await page.mouse.move(300, 300);
	await page.mouse.move(420, 360);
	await expect(page.locator('[data-testid=level-chart]').first()).toHaveAttribute('data-ready', 'true');
});
