/** Reads the local fake SMTP inbox that `npm test` starts (fixtures/mail/server.ts). */
import { expect, type ConsoleMessage, type Page } from '@playwright/test';

const inboxUrl = () => process.env.INBOX_URL ?? 'http://127.0.0.1:4401';

export interface InboxMessage {
	id: number;
	to: string[];
	subject: string;
	text: string;
	html: string | null;
	headers: Record<string, string>;
}

/** Wait for the newest message to `to` whose id is above `afterId`. */
export async function waitForMessage(to: string, afterId = 0, timeoutMs = 15_000): Promise<InboxMessage> {
	const deadline = Date.now() + timeoutMs;
	while (Date.now() < deadline) {
		const res = await fetch(`${inboxUrl()}/api/messages?to=${encodeURIComponent(to)}`);
		const list = (await res.json()) as InboxMessage[];
		const hit = list.find((m) => m.id > afterId);
		if (hit) return hit;
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`no e-mail reached ${to} within ${timeoutMs} ms`);
}

export async function lastMessageId(to: string): Promise<number> {
	const res = await fetch(`${inboxUrl()}/api/messages?to=${encodeURIComponent(to)}`);
	const list = (await res.json()) as InboxMessage[];
	return list[0]?.id ?? 0;
}

/** Sign in for real: request a link on /signin, read it from the inbox, follow it. */
export async function signIn(page: Page, email: string) {
	const before = await lastMessageId(email);
	await page.goto('/signin');
	await page.getByLabel('E-mail address').fill(email);
	// The enhanced form lands on our check-inbox page directly, with nothing logged as an error on the way.
	const errors: string[] = [];
	const onConsole = (m: ConsoleMessage) => m.type() === 'error' && errors.push(m.text());
	const onError = (e: Error) => errors.push(e.message);
	page.on('console', onConsole).on('pageerror', onError);
	await page.getByRole('button', { name: /sign-in link/i }).click();
	await expect(page.getByRole('heading', { name: 'Check your inbox' })).toBeVisible();
	await expect(page).toHaveURL(/\/signin\/check-inbox$/);
	page.off('console', onConsole).off('pageerror', onError);
	expect(errors).toEqual([]);
	const message = await waitForMessage(email, before);
	expect(message.subject).toContain('sign-in link');
	const link = message.text.match(/https?:\/\/\S+\/auth\/callback\/nodemailer\S*/)?.[0];
	expect(link, 'the message carries a callback link').toBeTruthy();
	await page.goto(link!);
}
