/**
 * The sender under failure: the SMTP server down, a sender process killed mid-batch, several
 * senders at once, retries running out, quiet hours.
 *
 * Sources: RFC 5321 section 4.5.4.1 (a sender retries a failed delivery later, backing off, and
 * gives up after a while) and section 4.2.1 (5yz replies are permanent); RFC 5322 section 3.6.4
 * (Message-ID identifies one message: a resend carries the same one). The at-least-once choice
 * and its bound (at most one batch resent after a crash) are ours, stated in README.md.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray, sql } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { createAlertHook } from '../../src/lib/server/alerts/match';
import { claimDue, outboxOverview, sendDue } from '../../src/lib/server/alerts/sender';
import { inQuietWindow, quietUntil } from '../../src/lib/server/alerts/schedule';
import {
	BASE_URL,
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

let env: Awaited<ReturnType<typeof seededDatabase>>;
let mail: Awaited<ReturnType<typeof fakeMail>>;
const hook = createAlertHook({ quietHours: 0 });
let clock = Date.now() + hours(1);
const tick = () => new Date((clock += hours(1)));

beforeAll(async () => {
	env = await seededDatabase('sg_it_alerts_resilience');
	mail = await fakeMail();
});
/** Sender processes this file started: stopped at the end even when a test fails midway. */
const running = new Set<ChildProcess>();
afterAll(async () => {
	for (const c of running) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
	await mail?.stop();
	await env?.close();
});

/** N members watching one converter; returns their addresses. */
async function watchers(prefix: string, slug: string, n: number) {
	const conv = await converterId(env.db, slug);
	const users = await env.db
		.insert(t.users)
		.values(Array.from({ length: n }, (_, i) => ({ email: `${prefix}-${i}@example.test` })))
		.returning({ id: t.users.id, email: t.users.email });
	await env.db.insert(t.watches).values(users.map((u) => ({ userId: u.id, converterId: conv })));
	return users;
}

async function restock(shop: string, slug: string) {
	const l = await listingId(env.db, shop, slug);
	await scriptChange(env.db, hook, { listingId: l, stock: 'out_of_stock', at: tick() });
	return scriptChange(env.db, hook, { listingId: l, stock: 'in_stock', at: tick() });
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('with the SMTP server stopped', () => {
	it('alerts wait, spend no attempts beyond the first failure, and all arrive once it is back', async () => {
		const users = await watchers('outage', 'tessaloop-loop-rgb', 5);
		await mail.stop();
		const ev = await restock('northbay-circuits', 'tessaloop-loop-rgb');
		const first = await sendDue(env.db, senderOptions(mail.smtpPort, { concurrency: 1 }));
		expect(first).toMatchObject({ claimed: 5, sent: 0, retried: 1, released: 4, dead: 0 });
		for (let i = 0; i < 3; i++) {
			await sleep(250);
			await sendDue(env.db, senderOptions(mail.smtpPort, { concurrency: 1 }));
		}
		const waiting = await env.db.select().from(t.alertOutbox).where(eq(t.alertOutbox.stockEventId, ev!.id));
		expect(waiting.every((r) => r.status === 'pending')).toBe(true);
		expect(waiting.some((r) => r.lastError?.includes('unreachable'))).toBe(true);
		// Four passes, one real attempt each: at most 4 attempts spent across the five rows.
		expect(waiting.reduce((n, r) => n + r.attempts, 0)).toBeLessThanOrEqual(4);

		await mail.start();
		for (let i = 0; i < 20; i++) {
			await sleep(250);
			await sendDue(env.db, senderOptions(mail.smtpPort));
			const rows = await env.db.select().from(t.alertOutbox).where(eq(t.alertOutbox.stockEventId, ev!.id));
			if (rows.every((r) => r.status === 'sent')) break;
		}
		for (const u of users) expect(mail.to(u.email!)).toHaveLength(1);
	});

	it('a message that never gets through goes dead with its reason, visible to admins', async () => {
		const [u] = await watchers('doomed', 'morrowgate-phosphor-one', 1);
		await mail.stop();
		await restock('kumo-parts', 'morrowgate-phosphor-one');
		for (let i = 0; i < 6; i++) {
			await sendDue(env.db, senderOptions(mail.smtpPort, { maxAttempts: 3 }));
			await sleep(250);
		}
		await mail.start();
		const [row] = await outboxRows(env.db, u.id);
		expect(row.status).toBe('dead');
		expect(row.attempts).toBe(3);
		expect(row.lastError).toMatch(/after 3 attempt\(s\)/);
		const overview = await outboxOverview(env.db);
		expect(overview.rows.find((r) => Number(r.id) === row.id)).toMatchObject({ status: 'dead', email: u.email });
		expect(overview.counts.dead).toBeGreaterThanOrEqual(1);
		// Dead stays dead: the sender does not pick it up again.
		await sendDue(env.db, senderOptions(mail.smtpPort));
		expect(mail.to(u.email!)).toHaveLength(0);
	});
});

describe('several senders and crashes', () => {
	it('two senders claiming at once never take the same row (FOR UPDATE SKIP LOCKED)', async () => {
		const users = await watchers('pair', 'vantacove-beam-bridge-pro', 40);
		await restock('wattle-and-wire', 'vantacove-beam-bridge-pro');
		const [a, b] = await Promise.all([
			claimDue(env.db, { owner: 'a', limit: 30, leaseMs: 60_000, mode: 'instant', domain: 'scopegrade.test' }),
			claimDue(env.db, { owner: 'b', limit: 30, leaseMs: 60_000, mode: 'instant', domain: 'scopegrade.test' })
		]);
		expect(a.length + b.length, `${a.length}+${b.length}`).toBe(40);
		expect(a.filter((id) => b.includes(id))).toEqual([]);
		// Hand the rows back (as if both leases ran out) and let two senders deliver them.
		await env.db
			.update(t.alertOutbox)
			.set({ leaseUntil: sql`now() - interval '1 second'` })
			.where(inArray(t.alertOutbox.id, [...a, ...b]));
		await Promise.all([
			sendDue(env.db, senderOptions(mail.smtpPort, { batchSize: 7, owner: 's1' })).then(() =>
				sendDue(env.db, senderOptions(mail.smtpPort, { batchSize: 50, owner: 's1' }))
			),
			sendDue(env.db, senderOptions(mail.smtpPort, { batchSize: 9, owner: 's2' })).then(() =>
				sendDue(env.db, senderOptions(mail.smtpPort, { batchSize: 50, owner: 's2' }))
			)
		]);
		for (const u of users) expect(mail.to(u.email!)).toHaveLength(1);
	});

	it('killing the sender process mid-batch loses nothing, and resends at most one batch with the same Message-ID', async () => {
		const n = 120;
		const batch = 10;
		const users = await watchers('crash', 'brisling-scanlet', n);
		const ev = await restock('northbay-circuits', 'brisling-scanlet');
		const childEnv = {
			...process.env,
			DATABASE_URL: env.url,
			SMTP_HOST: '127.0.0.1',
			SMTP_PORT: String(mail.smtpPort),
			MAIL_FROM: 'Scopegrade <alerts@scopegrade.test>',
			PUBLIC_BASE_URL: BASE_URL,
			AUTH_SECRET: SECRET,
			ALERT_BATCH_SIZE: String(batch),
			ALERT_CONCURRENCY: '1',
			ALERT_SEND_SPACING_MS: '15',
			ALERT_LEASE_SECONDS: '2',
			SENDER_INTERVAL_MS: '100'
		};
		// Node itself with tsx's loader, not the tsx wrapper: SIGKILL must hit the process that sends
		// (the wrapper's child would survive it as an orphan).
		const start = () =>
			spawn(process.execPath, ['--import', 'tsx', 'jobs/sender.ts'], {
				cwd: process.cwd(),
				env: childEnv,
				stdio: 'ignore'
			});

		const received = () => users.reduce((k, u) => k + mail.to(u.email!).length, 0);

		let child: ChildProcess = start();
		running.add(child);
		const deadline = Date.now() + 30_000;
		while (received() < 30 && Date.now() < deadline) await sleep(20);
		child.kill('SIGKILL');
		await new Promise((r) => child.once('exit', r));
		const atKill = received();
		expect(atKill).toBeGreaterThanOrEqual(30);
		expect(atKill).toBeLessThan(n);
		const stuck = await env.db.select().from(t.alertOutbox).where(eq(t.alertOutbox.status, 'sending'));
		expect(stuck.length).toBeLessThanOrEqual(batch);

		// A new sender takes over once the dead one's leases expire.
		child = start();
		running.add(child);
		const deadline2 = Date.now() + 40_000;
		while (Date.now() < deadline2) {
			const rows = await env.db
				.select({ status: t.alertOutbox.status })
				.from(t.alertOutbox)
				.where(eq(t.alertOutbox.stockEventId, ev!.id));
			if (rows.every((r) => r.status === 'sent')) break;
			await sleep(100);
		}
		child.kill('SIGTERM');
		await new Promise((r) => child.once('exit', r));

		const rows = await env.db.select().from(t.alertOutbox).where(eq(t.alertOutbox.stockEventId, ev!.id));
		expect(rows.every((r) => r.status === 'sent')).toBe(true);
		let duplicates = 0;
		for (const u of users) {
			const got = mail.to(u.email!);
			expect(got.length, u.email!).toBeGreaterThanOrEqual(1);
			duplicates += got.length - 1;
			// A resend is recognisable: same Message-ID as the first copy.
			expect(new Set(got.map((m) => m.headers['message-id'])).size).toBe(1);
		}
		expect(duplicates).toBeLessThanOrEqual(batch);
	}, 90_000);
});

describe('quiet hours', () => {
	it('windows wrap past midnight and equal bounds mean none', () => {
		expect(inQuietWindow(23, 22, 7)).toBe(true);
		expect(inQuietWindow(6, 22, 7)).toBe(true);
		expect(inQuietWindow(7, 22, 7)).toBe(false);
		expect(inQuietWindow(12, 9, 17)).toBe(true);
		expect(inQuietWindow(12, 5, 5)).toBe(false);
	});

	it('end at the local hour in the member time zone, across a daylight-saving change', () => {
		// Europe/Berlin moves from 02:00 CET to 03:00 CEST on 2025-03-30.
		const at = new Date('2025-03-30T00:30:00Z'); // 01:30 in Berlin (UTC+1)
		expect(quietUntil(at, { quietFrom: 22, quietTo: 7, timezone: 'Europe/Berlin' })?.toISOString()).toBe(
			'2025-03-30T05:00:00.000Z'
		); // 07:00 CEST
		expect(
			quietUntil(new Date('2025-06-01T12:00:00Z'), { quietFrom: 22, quietTo: 7, timezone: 'Europe/Berlin' })
		).toBeNull();
		expect(
			quietUntil(new Date('2025-06-01T12:15:00Z'), { quietFrom: 21, quietTo: 8, timezone: 'Asia/Tokyo' })?.toISOString()
		).toBe('2025-06-01T23:00:00.000Z');
	});

	it('the sender defers an alert to the end of the member quiet hours', async () => {
		// Quiet all day but the next hour, in UTC: whatever the time now, we are inside the window.
		const h = new Date().getUTCHours();
		const member = await createMember(env.db, 'sleeper@example.test', {
			quietFrom: (h + 23) % 24,
			quietTo: (h + 1) % 24,
			timezone: 'UTC'
		});
		await env.db
			.insert(t.watches)
			.values({ userId: member, converterId: await converterId(env.db, 'quillfen-q-cast-mini') });
		await restock('kumo-parts', 'quillfen-q-cast-mini');
		const r = await sendDue(env.db, senderOptions(mail.smtpPort));
		expect(r.deferred).toBe(1);
		const [row] = await outboxRows(env.db, member);
		expect(row.status).toBe('pending');
		expect(row.attempts).toBe(0);
		const next = new Date(row.nextAttemptAt);
		expect(next.getUTCHours()).toBe((h + 1) % 24);
		expect(next.getUTCMinutes()).toBe(0);
		expect(mail.to('sleeper@example.test')).toHaveLength(0);
	});
});
