/**
 * Hostile requests against the built app: forged host headers on sign-in, sign-in e-mail
 * limits, security headers on /auth/*, CSP, no-store for signed-in pages, foreign Origin on
 * JSON writes.
 */
import { expect, test } from '@playwright/test';
import { lastMessageId, signIn, waitForMessage } from './support/inbox';

const origin = process.env.ORIGIN || `http://127.0.0.1:${process.env.PORT || 4400}`;

function linkIn(text: string): URL {
	const link = text.match(/https?:\/\/\S+\/auth\/callback\/nodemailer\S*/)?.[0];
	expect(link, 'the message carries a callback link').toBeTruthy();
	return new URL(link!);
}

test('a forged X-Forwarded-Host or Host never changes where the e-mailed sign-in link points', async ({ request }) => {
	for (const [label, headers] of [
		['X-Forwarded-Host', { 'X-Forwarded-Host': 'evil.example', 'X-Forwarded-Proto': 'https' }],
		['Host', { Host: 'evil.example' }],
		['Forwarded', { Forwarded: 'host=evil.example;proto=https' }]
	] as const) {
		const email = `forged-${label.toLowerCase()}-${Date.now()}@example.test`;
		const before = await lastMessageId(email);
		const res = await request.post('/signin', {
			form: { email, next: '' },
			headers: { Origin: origin, ...headers },
			maxRedirects: 0
		});
		expect(res.status(), `${label}: the sign-in post is accepted`).toBeLessThan(400);
		const message = await waitForMessage(email, before);
		const link = linkIn(message.text);
		expect(link.origin, `${label}: the link uses the configured origin`).toBe(new URL(origin).origin);
		expect(message.text).not.toContain('evil.example');
		expect(message.html ?? '').not.toContain('evil.example');
	}
});

test('the link from a forged-header request signs in on the real origin only', async ({ page }) => {
	const email = `forged-replay-${Date.now()}@example.test`;
	const before = await lastMessageId(email);
	const res = await page.request.post('/signin', {
		form: { email, next: '/account' },
		headers: { Origin: origin, 'X-Forwarded-Host': 'evil.example' },
		maxRedirects: 0
	});
	expect(res.status()).toBeLessThan(400);
	const link = linkIn((await waitForMessage(email, before)).text);
	await page.goto(link.toString());
	await expect(page.getByTestId('signed-in-as')).toContainText(email);
});

test('sign-in e-mails are limited per address on /signin, with a message and Retry-After', async ({ request }) => {
	const email = `limited-${Date.now()}@example.test`;
	for (let i = 0; i < 5; i++) {
		const ok = await request.post('/signin', { form: { email }, headers: { Origin: origin }, maxRedirects: 0 });
		expect(ok.status(), `try ${i + 1}`).toBeLessThan(400);
	}
	// As a browser posts it without JavaScript (Accept: text/html), so the page answers with the action's status.
	const refused = await request.post('/signin', {
		form: { email },
		headers: { Origin: origin, Accept: 'text/html' },
		maxRedirects: 0
	});
	expect(refused.status()).toBe(429);
	expect(Number(refused.headers()['retry-after'])).toBeGreaterThan(0);
	expect(await refused.text()).toContain('Too many sign-in links');
	// The same address through the Auth.js endpoint itself is refused too.
	const direct = await request.post('/auth/signin/nodemailer', {
		form: { email },
		headers: { Origin: origin },
		maxRedirects: 0
	});
	expect(direct.status()).toBe(429);
	expect(direct.headers()['content-type']).toContain('application/problem+json');
	expect(Number(direct.headers()['retry-after'])).toBeGreaterThan(0);
	// Five messages went out, not more.
	const res = await fetch(
		`${process.env.INBOX_URL ?? 'http://127.0.0.1:4401'}/api/messages?to=${encodeURIComponent(email)}`
	);
	expect(((await res.json()) as unknown[]).length).toBe(5);
});

test('the Auth.js endpoint alone is limited per address as well', async ({ request }) => {
	const email = `limited-direct-${Date.now()}@example.test`;
	const statuses: number[] = [];
	for (let i = 0; i < 6; i++) {
		const res = await request.post('/auth/signin/nodemailer', {
			form: { email },
			headers: { Origin: origin },
			maxRedirects: 0
		});
		statuses.push(res.status());
	}
	expect(statuses.slice(0, 5).every((s) => s < 400)).toBe(true);
	expect(statuses[5]).toBe(429);
});

test('/auth/* answers carry the security headers', async ({ request }) => {
	for (const path of ['/auth/session', '/auth/csrf', '/auth/providers']) {
		const res = await request.get(path);
		const h = res.headers();
		expect(h['x-content-type-options'], path).toBe('nosniff');
		expect(h['x-frame-options'], path).toBe('DENY');
		expect(h['referrer-policy'], path).toBe('strict-origin-when-cross-origin');
	}
});

test('pages carry a Content-Security-Policy, and the theme script still runs under it', async ({ page }) => {
	const errors: string[] = [];
	page.on('console', (m) => {
		if (m.type() === 'error' && /Content Security Policy|Refused to/i.test(m.text())) errors.push(m.text());
	});
	await page.addInitScript(() => localStorage.setItem('sg-theme', 'dark'));
	const res = await page.goto('/');
	const csp = res?.headers()['content-security-policy'] ?? '';
	expect(csp).toContain("default-src 'self'");
	expect(csp).toContain("object-src 'none'");
	expect(csp).toContain("frame-ancestors 'none'");
	// Hashes, never nonces: anonymous pages are cached and shared, and a nonce must not repeat.
	expect(csp).not.toContain("'nonce-");
	expect(csp).toMatch(/script-src[^;]*'sha256-/);
	await expect(page.locator('html')).toHaveClass(/dark/);
	await page.goto('/converters');
	expect(errors).toEqual([]);
});

test('signed-in pages are not stored by caches; a foreign Origin cannot write through the JSON API', async ({
	page
}) => {
	await signIn(page, `nostore-${Date.now()}@example.test`);
	const res = await page.goto('/account');
	expect(res?.headers()['cache-control']).toBe('private, no-store');
	const foreign = await page.request.post('/api/v1/watches', {
		data: { converterSlug: 'anything' },
		headers: { Origin: 'https://evil.example' }
	});
	expect(foreign.status()).toBe(403);
	expect(foreign.headers()['content-type']).toContain('application/problem+json');
	const watches = await page.request.get('/api/v1/watches');
	expect((await watches.json()).watches).toEqual([]);
});
