/**
 * The watcher's journey: sign in, watch a converter from its page, the fake shop restocks it,
 * the jobs process (poller + sender, started by `npm test`) delivers one e-mail to the local
 * inbox, and its unsubscribe link works.
 *
 * Sources: RFC 2369 section 3.2 (List-Unsubscribe), RFC 8058 section 3.1 (List-Unsubscribe-Post,
 * a POST unsubscribes) and section 3.2 (a GET must not; no redirect in the answer).
 */
import { expect, request as playwrightRequest, test } from '@playwright/test';
import postgres from 'postgres';
import { lastMessageId, signIn, waitForMessage } from './support/inbox';

const EMAIL = 'watcher-e2e@scopegrade.test';
const SLUG = 'vantacove-beam-bridge-pro';
const SHOP = { shop: 'wattle-and-wire', path: '/shop/beam-bridge-pro' };
const control = process.env.SHOPS_CONTROL_URL ?? 'http://127.0.0.1:4410';

async function setShopStock(stock: 'in_stock' | 'out_of_stock') {
	const res = await fetch(`${control}/listing`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({ ...SHOP, stock })
	});
	expect(res.status).toBe(200);
	// Ask the poller to look now instead of at the listing's next scheduled poll.
	const sql = postgres(process.env.DATABASE_URL!, { max: 1, onnotice: () => {} });
	try {
		await sql`update listing_state set poll_requested_at = now()
			where listing_id in (select id from listing where url like ${'%' + SHOP.path})`;
	} finally {
		await sql.end();
	}
}

test('visitors get 401 from the watches API', async ({ request }) => {
	expect((await request.get('/api/v1/watches')).status()).toBe(401);
	expect((await request.post('/api/v1/watches', { data: { converterSlug: SLUG } })).status()).toBe(401);
	expect((await request.delete('/api/v1/watches/1')).status()).toBe(401);
});

test('a member watches a converter, its restock arrives by e-mail once, and unsubscribe works', async ({ page }) => {
	test.setTimeout(150_000);
	await signIn(page, EMAIL);

	// Bad input gets a clear 400 with field errors.
	const bad = await page.request.post('/api/v1/watches', { data: { converterSlug: 'Not A Slug', minBand: 'superb' } });
	expect(bad.status()).toBe(400);
	expect(Object.keys((await bad.json()).errors).sort()).toEqual(['converterSlug', 'minBand']);

	await page.goto(`/converters/${SLUG}`);
	const button = page.locator(`button[data-converter-slug="${SLUG}"]`);
	await expect(button).toBeVisible();
	await button.click();
	await expect(button).toHaveAttribute('aria-pressed', 'true');

	await page.goto('/account/watches');
	await expect(page.getByTestId('watch-list')).toContainText('Vantacove Beam Bridge Pro');
	// The page states the quiet period the jobs process uses (ALERT_QUIET_HOURS, 12 by default).
	await expect(page.getByText('Restocks of the same listing within 12 hours alert once.')).toBeVisible();

	const before = await lastMessageId(EMAIL);
	await setShopStock('in_stock');
	const message = await waitForMessage(EMAIL, before, 120_000);
	expect(message.subject).toBe('Back in stock: Vantacove Beam Bridge Pro at Wattle & Wire, 54.95 AUD');
	expect(message.text).toContain('Wattle & Wire, Australia');
	expect(message.headers['list-unsubscribe-post']).toBe('List-Unsubscribe=One-Click');
	const link = /^<([^>]+\/unsubscribe\/[^>]+)>, <mailto:unsubscribe\+[^>]+@scopegrade\.test>$/.exec(
		message.headers['list-unsubscribe']
	)?.[1];
	expect(link, message.headers['list-unsubscribe']).toBeTruthy();

	// Once: a few more sender passes bring nothing new.
	await page.waitForTimeout(5000);
	const res = await fetch(
		`${process.env.INBOX_URL ?? 'http://127.0.0.1:4401'}/api/messages?to=${encodeURIComponent(EMAIL)}`
	);
	const alerts = ((await res.json()) as { id: number; subject: string }[]).filter((m) => m.id > before);
	expect(alerts).toHaveLength(1);

	// Opening the link (a GET) only asks; the watch stays active.
	await page.goto(link!);
	await expect(page.getByRole('heading', { name: 'Stop these alerts?' })).toBeVisible();
	let watches = (await (await page.request.get('/api/v1/watches')).json()).watches as {
		converterSlug: string;
		paused: boolean;
	}[];
	expect(watches.find((w) => w.converterSlug === SLUG)?.paused).toBe(false);

	// The mail provider's one-click POST (RFC 8058 section 3.2): no cookies, no Origin, no HTML
	// asked for; answered 200 without a redirect, and idempotent.
	const provider = await playwrightRequest.newContext();
	for (let i = 0; i < 2; i++) {
		const oneClick = await provider.post(link!, {
			headers: { 'content-type': 'application/x-www-form-urlencoded' },
			data: 'List-Unsubscribe=One-Click',
			maxRedirects: 0
		});
		expect(oneClick.status()).toBe(200);
	}
	await provider.dispose();
	watches = (await (await page.request.get('/api/v1/watches')).json()).watches;
	expect(watches.find((w) => w.converterSlug === SLUG)?.paused).toBe(true);

	// A person pressing the page's button afterwards sees it done, not an error.
	await page.getByRole('button', { name: 'Unsubscribe' }).click();
	await expect(page.getByTestId('unsubscribed')).toBeVisible();

	// Put the shop back as the seed had it, and wait for the poller to see it, so the journeys
	// that follow find the seeded stock.
	await setShopStock('out_of_stock');
	await expect
		.poll(
			async () => {
				const sql = postgres(process.env.DATABASE_URL!, { max: 1, onnotice: () => {} });
				try {
					const [row] =
						await sql`select current_stock from listing_state where listing_id in (select id from listing where url like ${'%' + SHOP.path})`;
					return row?.current_stock;
				} finally {
					await sql.end();
				}
			},
			{ timeout: 60_000, intervals: [1000] }
		)
		.toBe('out_of_stock');
});

test('the account page keeps what was typed and says what is wrong', async ({ page }) => {
	await signIn(page, 'rules-e2e@scopegrade.test');
	await page.goto('/account/watches');
	const form = page.getByTestId('create-watch');
	await form.getByLabel('Highest price').fill('12.345');
	await form.getByLabel('Currency').selectOption('EUR');
	await form.getByLabel('Lowest band').selectOption('close');
	await form.getByRole('button', { name: 'Add watch' }).click();
	await expect(form.getByText('EUR has 2 decimal places.')).toBeVisible();
	await expect(form.getByLabel('Highest price')).toHaveValue('12.345');
	await expect(form.getByLabel('Lowest band')).toHaveValue('close');
	await form.getByLabel('Highest price').fill('20');
	await form.getByRole('button', { name: 'Add watch' }).click();
	await expect(page.getByTestId('watch-list')).toContainText(
		'Any converter · graded Close or better · at most 20.00 EUR'
	);
});

// RFC 8058 section 3.1: a mail provider POSTs "List-Unsubscribe=One-Click" from its own servers,
// with a form content type, no cookies and no Origin header. Our origin check (src/lib/server/csrf.ts)
// lets exactly that endpoint through; a forged token still gets 400, and a GET never acts.
test('a one-click POST from a mail provider (no Origin header) reaches the endpoint, and a forged token is refused', async ({
	request
}) => {
	const forged = await request.post('/unsubscribe/w1.AAAAAAAAAAAAAAAAAAAAAA', {
		headers: { 'content-type': 'application/x-www-form-urlencoded' },
		data: 'List-Unsubscribe=One-Click',
		maxRedirects: 0
	});
	expect(forged.status()).toBe(400);
	// Any other form post without an Origin is still refused before it reaches a route.
	const elsewhere = await request.post('/signin', {
		headers: { 'content-type': 'application/x-www-form-urlencoded' },
		data: 'email=a@example.test',
		maxRedirects: 0
	});
	expect(elsewhere.status()).toBe(403);
});
