/**
 * One-click unsubscribe, through the route's own load (GET) and action (POST) against a real
 * database and the fake SMTP server.
 *
 * Sources: RFC 8058 section 3.1 (the List-Unsubscribe HTTPS URI with a token that is hard to
 * forge; a POST with body "List-Unsubscribe=One-Click" and no cookies unsubscribes), section 3.2
 * (the endpoint must not answer a POST with a redirect; a GET must not unsubscribe, since
 * anti-spam scanners fetch links), section 4 (the token identifies the list and recipient).
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { eq } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { createAlertHook } from '../../src/lib/server/alerts/match';
import { sendDue } from '../../src/lib/server/alerts/sender';
import { signUnsubscribeToken, verifyUnsubscribeToken } from '../../src/lib/server/alerts/token';
import { unsubscribeWithToken } from '../../src/lib/server/alerts/unsubscribe';
import {
	SECRET,
	converterId,
	createMember,
	fakeMail,
	hours,
	listingId,
	outboxRows,
	scriptChange,
	seededDatabase,
	senderOptions
} from './alerts-support';

// The route reads its settings through $env/dynamic/private: point that at process.env, set below.
vi.mock('$env/dynamic/private', () => ({ env: process.env }));

let env: Awaited<ReturnType<typeof seededDatabase>>;
let mail: Awaited<ReturnType<typeof fakeMail>>;
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- the route module, imported at run time
let route: any;
const hook = createAlertHook({ quietHours: 0 });
const t0 = new Date(Date.now() + hours(1));

beforeAll(async () => {
	env = await seededDatabase('sg_it_alerts_unsub');
	mail = await fakeMail();
	// The route reads DATABASE_URL and AUTH_SECRET through $env/dynamic/private when first imported.
	process.env.DATABASE_URL = env.url;
	process.env.AUTH_SECRET = SECRET;
	route = await import('../../src/routes/unsubscribe/[token]/+page.server');
});
afterAll(async () => {
	await mail?.stop();
	await env?.close();
});

const tokenFrom = (header: string) => /\/unsubscribe\/([^>]+)>/.exec(header)![1];

describe('tokens', () => {
	it('round-trip for a watch and for a member, and reject tampering', () => {
		const w = signUnsubscribeToken(SECRET, { kind: 'watch', watchId: 42 });
		expect(verifyUnsubscribeToken(SECRET, w)).toEqual({ kind: 'watch', watchId: 42 });
		const uid = '0f8fad5b-d9cb-469f-a165-70867728950e';
		const a = signUnsubscribeToken(SECRET, { kind: 'all', userId: uid });
		expect(verifyUnsubscribeToken(SECRET, a)).toEqual({ kind: 'all', userId: uid });
		// RFC 5321 section 4.5.3.1.1: "unsubscribe+TOKEN" must fit a 64-octet local part.
		expect(`unsubscribe+${a}`.length).toBeLessThanOrEqual(64);
		expect(verifyUnsubscribeToken(SECRET, w.replace('w42', 'w43'))).toBeNull();
		expect(verifyUnsubscribeToken('another-secret-0123456789', w)).toBeNull();
		expect(verifyUnsubscribeToken(SECRET, w.slice(0, -1) + (w.endsWith('A') ? 'B' : 'A'))).toBeNull();
		expect(verifyUnsubscribeToken(SECRET, 'garbage')).toBeNull();
		expect(verifyUnsubscribeToken(SECRET, '')).toBeNull();
	});
});

describe('one-click unsubscribe', () => {
	let member: string;
	let listing: number;

	beforeAll(async () => {
		member = await createMember(env.db, 'unsub@example.test');
		await env.db
			.insert(t.watches)
			.values({ userId: member, converterId: await converterId(env.db, 'morrowgate-phosphor-one') });
		listing = await listingId(env.db, 'thamesbit', 'morrowgate-phosphor-one');
		await scriptChange(env.db, hook, { listingId: listing, stock: 'in_stock', at: t0 });
		await sendDue(env.db, senderOptions(mail.smtpPort));
	});

	it('a GET shows a confirmation and does not unsubscribe (RFC 8058 section 3.2)', async () => {
		const [m] = mail.to('unsub@example.test');
		const token = tokenFrom(m.headers['list-unsubscribe']);
		const page = await route.load({ params: { token }, setHeaders: () => {} });
		expect(page).toMatchObject({ valid: true, alreadyStopped: false, what: 'alerts for Morrowgate Phosphor One' });
		const [w] = await env.db.select().from(t.watches).where(eq(t.watches.userId, member));
		expect(w.paused).toBe(false);
	});

	it('a POST unsubscribes, answers with data (200, no redirect), and is idempotent (RFC 8058 section 3.1)', async () => {
		const [m] = mail.to('unsub@example.test');
		const token = tokenFrom(m.headers['list-unsubscribe']);
		const request = new Request(`https://scopegrade.example/unsubscribe/${token}`, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded' },
			body: 'List-Unsubscribe=One-Click'
		});
		const first = await route.actions.default({ params: { token }, request });
		expect(first).toEqual({ done: true, what: 'alerts for Morrowgate Phosphor One' });
		const second = await route.actions.default({ params: { token }, request: request.clone() });
		expect(second).toEqual(first);
		const [w] = await env.db.select().from(t.watches).where(eq(t.watches.userId, member));
		expect(w.paused).toBe(true);
		expect((await route.load({ params: { token }, setHeaders: () => {} })).alreadyStopped).toBe(true);
	});

	it('a forged token answers 400 and changes nothing', async () => {
		const result = await route.actions.default({
			params: { token: 'w1.AAAAAAAAAAAAAAAAAAAAAA' },
			request: new Request('https://x.test', { method: 'POST' })
		});
		expect(result.status).toBe(400);
		expect((await route.load({ params: { token: 'nonsense' }, setHeaders: () => {} })).valid).toBe(false);
	});

	it('stops further mail: the next restock alerts nobody', async () => {
		const before = mail.to('unsub@example.test').length;
		await scriptChange(env.db, hook, {
			listingId: listing,
			stock: 'out_of_stock',
			at: new Date(t0.getTime() + hours(1))
		});
		await scriptChange(env.db, hook, { listingId: listing, stock: 'in_stock', at: new Date(t0.getTime() + hours(2)) });
		await sendDue(env.db, senderOptions(mail.smtpPort));
		expect(mail.to('unsub@example.test').length).toBe(before);
	});

	it('skips alerts already waiting in the outbox', async () => {
		const other = await createMember(env.db, 'waiting@example.test');
		const [w] = await env.db
			.insert(t.watches)
			.values({ userId: other, converterId: await converterId(env.db, 'morrowgate-phosphor-one') })
			.returning();
		await scriptChange(env.db, hook, {
			listingId: listing,
			stock: 'out_of_stock',
			at: new Date(t0.getTime() + hours(3))
		});
		await scriptChange(env.db, hook, { listingId: listing, stock: 'in_stock', at: new Date(t0.getTime() + hours(4)) });
		expect((await outboxRows(env.db, other))[0].status).toBe('pending');
		const outcome = await unsubscribeWithToken(
			env.db,
			SECRET,
			signUnsubscribeToken(SECRET, { kind: 'watch', watchId: w.id })
		);
		expect(outcome).toMatchObject({ paused: 1, skipped: 1 });
		await sendDue(env.db, senderOptions(mail.smtpPort));
		expect(mail.to('waiting@example.test')).toHaveLength(0);
	});

	it('an all-alerts token (digests) pauses every watch of the member', async () => {
		const m = await createMember(env.db, 'many@example.test');
		await env.db.insert(t.watches).values([
			{ userId: m, converterId: await converterId(env.db, 'tessaloop-loop-rgb') },
			{ userId: m, minBand: 'close' }
		]);
		const outcome = await unsubscribeWithToken(
			env.db,
			SECRET,
			signUnsubscribeToken(SECRET, { kind: 'all', userId: m })
		);
		expect(outcome).toMatchObject({ paused: 2, what: 'every Scopegrade alert to this address' });
		const watches = await env.db.select().from(t.watches).where(eq(t.watches.userId, m));
		expect(watches.every((w) => w.paused)).toBe(true);
	});
});
