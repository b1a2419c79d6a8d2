/**
 * Restock alerts end to end against a real database and the real fake SMTP server: matching into
 * the outbox in the event's transaction, delivery once, content and headers.
 *
 * Header checks cite their source: RFC 2369 section 3.2 (List-Unsubscribe: angle-bracketed URIs,
 * comma-separated, most preferred first), RFC 8058 section 3.1 (List-Unsubscribe-Post with the
 * value "List-Unsubscribe=One-Click", an HTTPS URI in List-Unsubscribe), RFC 5322 section 3.6.4
 * (Message-ID: "<" id-left "@" id-right ">").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { createAlertHook, matchStockEvents } from '../../src/lib/server/alerts/match';
import { sendDue } from '../../src/lib/server/alerts/sender';
import { verifyUnsubscribeToken } from '../../src/lib/server/alerts/token';
import {
	BASE_URL,
	SECRET,
	converterId,
	createMember,
	fakeMail,
	hours,
	listingId,
	minutes,
	outboxRows,
	scriptChange,
	seededDatabase,
	senderOptions
} from './alerts-support';

let env: Awaited<ReturnType<typeof seededDatabase>>;
let mail: Awaited<ReturnType<typeof fakeMail>>;
const hook = createAlertHook({ quietHours: 12 });
const t0 = new Date(Date.now() + hours(1));

beforeAll(async () => {
	env = await seededDatabase('sg_it_alerts_delivery');
	mail = await fakeMail();
});
afterAll(async () => {
	await mail?.stop();
	await env?.close();
});

describe('a restock of a well-graded unit', () => {
	let anyRev: string;
	let closeOrBetter: string;
	let ruleNa: string;
	let ruleEu: string;
	let beamBridgeAtNorthbay: number;

	beforeAll(async () => {
		const { db } = env;
		const beam = await converterId(db, 'vantacove-beam-bridge');
		anyRev = await createMember(db, 'any-revision@example.test');
		closeOrBetter = await createMember(db, 'close-or-better@example.test');
		ruleNa = await createMember(db, 'rule-na@example.test');
		ruleEu = await createMember(db, 'rule-eu@example.test');
		await db.insert(t.watches).values([
			{ userId: anyRev, converterId: beam },
			{ userId: closeOrBetter, converterId: beam, minBand: 'close' },
			// 24.99 USD is about 23.14 EUR at the demo's 1.08 USD per EUR: under 30 EUR.
			{ userId: ruleNa, minBand: 'close', maxPriceMinor: 3000, priceCurrency: 'EUR', region: 'na', needsAudio: true },
			// Northbay Circuits ships to North America only: an EU rule must not match.
			{ userId: ruleEu, minBand: 'close', maxPriceMinor: 3000, priceCurrency: 'EUR', region: 'eu' }
		]);
		beamBridgeAtNorthbay = await listingId(db, 'northbay-circuits', 'vantacove-beam-bridge');
		// History for "how long it lasted": an earlier restock that sold out 3 days 4 hours later.
		await scriptChange(db, async () => {}, {
			listingId: beamBridgeAtNorthbay,
			stock: 'in_stock',
			at: new Date(t0.getTime() - hours(24 * 10))
		});
		await scriptChange(db, async () => {}, {
			listingId: beamBridgeAtNorthbay,
			stock: 'out_of_stock',
			at: new Date(t0.getTime() - hours(24 * 10 - 76))
		});
	});

	it('writes one outbox row per matching watch in the event transaction', async () => {
		const ev = await scriptChange(env.db, hook, {
			listingId: beamBridgeAtNorthbay,
			stock: 'in_stock',
			priceMinor: 2499,
			at: t0
		});
		expect(ev?.kind).toBe('restock');
		const rows = await outboxRows(env.db);
		expect(rows.map((r) => r.userId).sort()).toEqual([anyRev, closeOrBetter, ruleNa].sort());
		expect(rows.every((r) => r.stockEventId === ev!.id && r.status === 'pending' && r.mode === 'instant')).toBe(true);
	});

	it('a replayed event creates no second row and no second message', async () => {
		const [ev] = await env.db
			.select()
			.from(t.stockEvents)
			.where(eq(t.stockEvents.kind, 'restock'))
			.orderBy(sql`id desc`)
			.limit(1);
		const input = { ...ev, kind: ev.kind, priceMinor: ev.priceMinor, currency: ev.currency };
		const again = await env.db.transaction((tx) => matchStockEvents(tx, [input, input], { quietHours: 12 }));
		expect(again.map((r) => r.created)).toEqual([0, 0]);
		expect(await outboxRows(env.db)).toHaveLength(3);
	});

	it('reaches each watcher once, with the facts, links and unsubscribe headers', async () => {
		const report = await sendDue(env.db, senderOptions(mail.smtpPort));
		expect(report).toMatchObject({ claimed: 3, sent: 3, retried: 0, dead: 0 });
		// A second pass finds nothing to do: sent rows are never sent again.
		expect((await sendDue(env.db, senderOptions(mail.smtpPort))).claimed).toBe(0);

		const inbox = await mail.inboxJson('any-revision@example.test');
		expect(inbox).toHaveLength(1);
		const m = inbox[0];
		expect(m.subject).toBe('Back in stock: Vantacove Beam Bridge at Northbay Circuits, 24.99 USD');
		const [rev] = await env.db
			.select({ band: t.revisions.band })
			.from(t.revisions)
			.where(eq(t.revisions.converterId, await converterId(env.db, 'vantacove-beam-bridge')));
		const label = { exact: 'Exact', close: 'Close', fair: 'Fair', poor: 'Poor', failing: 'Failing' }[rev.band!];
		expect(m.text).toContain('Vantacove Beam Bridge is back in stock');
		expect(m.text).toContain('Northbay Circuits, North America');
		expect(m.text).toContain('24.99 USD');
		expect(m.text).toContain(`Level grade:   ${label}`);
		expect(m.text).toMatch(/On the bench: {2}\S.+/);
		expect(m.text).toContain('Last time it stayed in stock for 3 days 4 hours.');
		expect(m.text).toContain('http://127.0.0.1:5611/products/beam-bridge');
		expect(m.text).toContain(`${BASE_URL}/converters/vantacove-beam-bridge`);
		expect(m.text).toContain(`${BASE_URL}/account/watches`);
		expect(m.html).toContain('Open the shop page');
		expect(m.html).toContain(`href="${BASE_URL}/converters/vantacove-beam-bridge"`);

		// RFC 2369 section 3.2 + RFC 8058 section 3.1.
		const lu = m.headers['list-unsubscribe'];
		const match =
			/^<(https:\/\/scopegrade\.example\/unsubscribe\/([A-Za-z0-9._~-]+))>, <mailto:unsubscribe\+([A-Za-z0-9._~-]+)@scopegrade\.test>$/.exec(
				lu
			);
		expect(match, lu).toBeTruthy();
		expect(match![2]).toBe(match![3]);
		expect(verifyUnsubscribeToken(SECRET, match![2])?.kind).toBe('watch');
		// RFC 5321 section 4.5.3.1.1: a local part holds at most 64 octets.
		expect(`unsubscribe+${match![3]}`.length).toBeLessThanOrEqual(64);
		expect(m.headers['list-unsubscribe-post']).toBe('List-Unsubscribe=One-Click');
		// RFC 5322 section 3.6.4, and the outbox keeps the id it used.
		const [row] = await outboxRows(env.db, anyRev);
		expect(m.headers['message-id']).toBe(row.messageId);
		expect(row.messageId).toMatch(/^<alert-\d+\.\d+@scopegrade\.test>$/);
		expect(row.status).toBe('sent');
		expect(row.attempts).toBe(1);

		// The EUR rule member sees the price in EUR too (24.99 USD / 1.08 * 1 = 23.14 EUR).
		const [rule] = await mail.inboxJson('rule-na@example.test');
		expect(rule.text).toContain('24.99 USD (about 23.14 EUR)');
		expect(await mail.inboxJson('rule-eu@example.test')).toHaveLength(0);
	});

	it('flapping within the quiet period sends no second message', async () => {
		const before = mail.to('any-revision@example.test').length;
		await scriptChange(env.db, hook, {
			listingId: beamBridgeAtNorthbay,
			stock: 'out_of_stock',
			at: new Date(t0.getTime() + minutes(40))
		});
		const again = await scriptChange(env.db, hook, {
			listingId: beamBridgeAtNorthbay,
			stock: 'in_stock',
			at: new Date(t0.getTime() + minutes(90))
		});
		await scriptChange(env.db, hook, {
			listingId: beamBridgeAtNorthbay,
			stock: 'out_of_stock',
			at: new Date(t0.getTime() + hours(3))
		});
		const third = await scriptChange(env.db, hook, {
			listingId: beamBridgeAtNorthbay,
			stock: 'in_stock',
			at: new Date(t0.getTime() + hours(11))
		});
		const [e2] = await env.db.select().from(t.stockEvents).where(eq(t.stockEvents.id, again!.id));
		const [e3] = await env.db.select().from(t.stockEvents).where(eq(t.stockEvents.id, third!.id));
		expect(e2.quiet).toBe(true);
		expect(e3.quiet).toBe(true);
		expect(await outboxRows(env.db)).toHaveLength(3);
		await sendDue(env.db, senderOptions(mail.smtpPort));
		expect(mail.to('any-revision@example.test').length).toBe(before);

		// Past the quiet period (12 h after the restock that alerted), a restock alerts again.
		await scriptChange(env.db, hook, {
			listingId: beamBridgeAtNorthbay,
			stock: 'out_of_stock',
			at: new Date(t0.getTime() + hours(12))
		});
		const fourth = await scriptChange(env.db, hook, {
			listingId: beamBridgeAtNorthbay,
			stock: 'in_stock',
			at: new Date(t0.getTime() + hours(13))
		});
		const [e4] = await env.db.select().from(t.stockEvents).where(eq(t.stockEvents.id, fourth!.id));
		expect(e4.quiet).toBe(false);
		await sendDue(env.db, senderOptions(mail.smtpPort));
		expect(mail.to('any-revision@example.test').length).toBe(before + 1);
	});
});

describe('a restock of a poorly graded unit', () => {
	it('does not alert a band-limited watch, but does alert an any-revision watch', async () => {
		const { db } = env;
		const mini = await converterId(db, 'quillfen-q-cast-mini');
		const limited = await createMember(db, 'fair-or-better@example.test');
		const anyBand = await createMember(db, 'mini-any@example.test');
		await db.insert(t.watches).values([
			{ userId: limited, converterId: mini, minBand: 'fair' },
			{ userId: anyBand, converterId: mini }
		]);
		const [band] = await db
			.select({ band: t.revisions.band })
			.from(t.revisions)
			.where(eq(t.revisions.converterId, mini));
		expect(['poor', 'failing']).toContain(band.band);
		const listing = await listingId(db, 'kanalhaus', 'quillfen-q-cast-mini');
		await scriptChange(db, hook, { listingId: listing, stock: 'out_of_stock', at: new Date(t0.getTime() + hours(20)) });
		await scriptChange(db, hook, { listingId: listing, stock: 'in_stock', at: new Date(t0.getTime() + hours(21)) });
		await sendDue(db, senderOptions(mail.smtpPort));
		expect(await outboxRows(db, limited)).toHaveLength(0);
		expect(mail.to('fair-or-better@example.test')).toHaveLength(0);
		expect(mail.to('mini-any@example.test')).toHaveLength(1);
	});

	it('a converter whose current revision is poor does not ride on an old good revision', async () => {
		const { db } = env;
		// Brisling Scanlet: revision A (seen_to set) graded well, revision B (current) crushes shadows.
		const scanlet = await converterId(db, 'brisling-scanlet');
		const revs = await db
			.select({ code: t.revisions.code, band: t.revisions.band, seenTo: t.revisions.seenTo })
			.from(t.revisions)
			.where(eq(t.revisions.converterId, scanlet));
		const current = revs.find((r) => r.seenTo == null)!;
		const member = await createMember(db, 'scanlet-close@example.test');
		await db.insert(t.watches).values({ userId: member, converterId: scanlet, minBand: 'close' });
		const listing = await listingId(db, 'kanalhaus', 'brisling-scanlet');
		await scriptChange(db, hook, { listingId: listing, stock: 'out_of_stock', at: new Date(t0.getTime() + hours(20)) });
		await scriptChange(db, hook, { listingId: listing, stock: 'in_stock', at: new Date(t0.getTime() + hours(21)) });
		const rows = await outboxRows(db, member);
		expect(rows).toHaveLength(['exact', 'close'].includes(current.band!) ? 1 : 0);
	});
});

describe('price drops', () => {
	it('alert only watches that ask for them, and only under the rule limit', async () => {
		const { db } = env;
		const pro = await converterId(db, 'vantacove-beam-bridge-pro');
		const wants = await createMember(db, 'drops@example.test');
		const doesNot = await createMember(db, 'no-drops@example.test');
		const tooLow = await createMember(db, 'drops-under-20@example.test');
		await db.insert(t.watches).values([
			{ userId: wants, converterId: pro, alsoPriceDrops: true, maxPriceMinor: 3000, priceCurrency: 'GBP' },
			{ userId: doesNot, converterId: pro },
			{ userId: tooLow, converterId: pro, alsoPriceDrops: true, maxPriceMinor: 2000, priceCurrency: 'GBP' }
		]);
		const listing = await listingId(db, 'thamesbit', 'vantacove-beam-bridge-pro');
		const ev = await scriptChange(db, hook, {
			listingId: listing,
			stock: 'in_stock',
			priceMinor: 2590,
			at: new Date(t0.getTime() + hours(30))
		});
		expect(ev?.kind).toBe('price_drop');
		expect((await outboxRows(db, wants)).length).toBe(1);
		expect((await outboxRows(db, doesNot)).length).toBe(0);
		expect((await outboxRows(db, tooLow)).length).toBe(0);
		await sendDue(db, senderOptions(mail.smtpPort));
		const [m] = mail.to('drops@example.test');
		expect(m.subject).toBe('Price drop: Vantacove Beam Bridge Pro at Thamesbit, 25.90 GBP');
	});
});
