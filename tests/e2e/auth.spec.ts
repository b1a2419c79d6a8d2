import { expect, test } from '@playwright/test';
import { lastMessageId, signIn, waitForMessage } from './support/inbox';
import { LISTINGS } from '../../src/lib/demo/scenario';

test('a visitor signs in through the e-mailed link and sees the signed-in state', async ({ page }) => {
	const email = `visitor-${Date.now()}@example.test`;
	await signIn(page, email);
	await expect(page).toHaveURL(/\/account$/);
	await expect(page.getByTestId('signed-in-as')).toContainText(email);
	await expect(page.getByTestId('signed-in-as')).toContainText('member');

	// Signing out ends the session.
	await page.getByRole('main').getByRole('button', { name: 'Sign out' }).click();
	await page.goto('/account');
	await expect(page).toHaveURL(/\/signin\?next=%2Faccount/);
});

test('a signed-out visitor is sent to sign in from protected pages, and the API answers 401', async ({
	page,
	request
}) => {
	await page.goto('/curate');
	await expect(page).toHaveURL(/\/signin\?next=%2Fcurate/);
	const api = await request.get('/api/v1/curate/summary');
	expect(api.status()).toBe(401);
});

test('a member gets 403 from curator pages and the curator API', async ({ page }) => {
	await signIn(page, `member-${Date.now()}@example.test`);
	const res = await page.goto('/curate');
	expect(res?.status()).toBe(403);
	const admin = await page.goto('/admin');
	expect(admin?.status()).toBe(403);
	const api = await page.request.get('/api/v1/curate/summary');
	expect(api.status()).toBe(403);
});

test('the demo curator reaches the workspace and the curator API, but not admin', async ({ page }) => {
	await signIn(page, 'curator@scopegrade.test');
	const res = await page.goto('/curate');
	expect(res?.status()).toBe(200);
	await expect(page.getByRole('heading', { name: 'Curator workspace' })).toBeVisible();
	const api = await page.request.get('/api/v1/curate/summary');
	expect(api.status()).toBe(200);
	expect(await api.json()).toMatchObject({ pendingRuns: expect.any(Number), listings: LISTINGS.length });
	const admin = await page.goto('/admin');
	expect(admin?.status()).toBe(403);
});

test('an address in ADMIN_EMAILS gets the admin role', async ({ page }) => {
	await signIn(page, 'owner@scopegrade.test');
	const res = await page.goto('/admin');
	expect(res?.status()).toBe(200);
});

test('a malformed address is refused with a clear message and sends nothing', async ({ page }) => {
	await page.goto('/signin');
	// Bypass the browser's own type=email check to reach the server-side validation.
	await page.getByLabel('E-mail address').evaluate((el) => el.setAttribute('type', 'text'));
	await page.getByLabel('E-mail address').fill('not-an-address');
	await page.getByRole('button', { name: /sign-in link/i }).click();
	await expect(page.getByText('Enter an e-mail address like name@example.com.')).toBeVisible();
	await expect(page.getByLabel('E-mail address')).toHaveValue('not-an-address');
});

test('sign-in works without JavaScript: a bad address is a 400 on the field, then the link leads back to next', async ({
	browser
}) => {
	const page = await (await browser.newContext({ javaScriptEnabled: false })).newPage();
	const email = `no-script-${Date.now()}@example.test`;
	await page.goto('/signin?next=%2Faccount%2Fwatches');
	const field = page.getByLabel('E-mail address');
	await field.evaluate((el) => el.setAttribute('type', 'text'));
	await field.fill('not-an-address');
	const answer = page.waitForResponse((r) => r.request().method() === 'POST');
	await page.getByRole('button', { name: /sign-in link/i }).click();
	expect((await answer).status()).toBe(400);
	await expect(page.getByText('Enter an e-mail address like name@example.com.')).toBeVisible();
	await expect(page.getByLabel('E-mail address')).toHaveValue('not-an-address');
	await expect(page.getByLabel('E-mail address')).toHaveAttribute('aria-invalid', 'true');

	// The second try still carries where to go, and the address is normalised before sending.
	const before = await lastMessageId(email);
	await page.getByLabel('E-mail address').fill(`  ${email.toUpperCase()} `);
	await page.getByRole('button', { name: /sign-in link/i }).click();
	await expect(page.getByRole('heading', { name: 'Check your inbox' })).toBeVisible();
	const link = (await waitForMessage(email, before)).text.match(/https?:\/\/\S+\/auth\/callback\/nodemailer\S*/)?.[0];
	expect(link, 'the message carries a callback link').toBeTruthy();
	await page.goto(link!);
	await expect(page).toHaveURL(/\/account\/watches$/);
	await page.context().close();
});

test('the sign-in answer does not tell a known address from an unknown one', async ({ browser, request, baseURL }) => {
	const known = `known-${Date.now()}@example.test`;
	const page = await (await browser.newContext()).newPage();
	await signIn(page, known);
	await page.context().close();
	const answers = [];
	for (const email of [known, `unknown-${Date.now()}@example.test`]) {
		const res = await request.post('/signin', {
			form: { email, next: '' },
			headers: { Origin: baseURL!, Accept: 'text/html' },
			maxRedirects: 0
		});
		answers.push({ status: res.status(), location: res.headers()['location'], body: await res.text() });
	}
	expect(answers[0].status).toBeGreaterThanOrEqual(300);
	expect(answers[0].status).toBeLessThan(400);
	expect(answers[1]).toEqual(answers[0]);
});
