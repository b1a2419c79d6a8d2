/**
 * The real poller, the fake shops and the alert hook together: a scripted restock on a fake
 * shop page becomes a stock_event, an outbox row in the same transaction, and one e-mail; a
 * flap inside the quiet period and a repeated poll send nothing more. Also the daily digest.
 *
 * Sources: schema.org 30.0 ItemAvailability (InStock/OutOfStock on the fake shop pages);
 * RFC 2369 section 3.2 and RFC 8058 section 3.1 for the digest's unsubscribe headers.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { createAlertHook } from '../../src/lib/server/alerts/match';
import { sendDue } from '../../src/lib/server/alerts/sender';
import { sendDigests } from '../../src/lib/server/alerts/digest';
import { verifyUnsubscribeToken } from '../../src/lib/server/alerts/token';
import { createWorld, setSpacing, type World } from './poller-helpers';
import { SECRET, converterId, createMember, fakeMail, outboxRows, senderOptions } from './alerts-support';

let world: World;
let mail: Awaited<ReturnType<typeof fakeMail>>;
const quietHours = 12;

beforeAll(async () => {
	world = await createWorld('sg_it_alerts_poller');
	await setSpacing(world.db, 0);
	mail = await fakeMail();
});
afterAll(async () => {
	await mail?.stop();
	await world?.close();
});

async function pollNow(listingId: number) {
	const poller = world.poller({
		onStockEvents: createAlertHook({ quietHours }),
		restockQuietMs: quietHours * 3_600_000
	});
	await world.db
		.update(t.listingStates)
		.set({ pollRequestedAt: world.clock.now() })
		.where(eq(t.listingStates.listingId, listingId));
	const r = await poller.pollListing(listingId);
	await poller.release();
	return r;
}

describe('through the real poller', () => {
	it('a restock on the shop page reaches the watcher once', async () => {
		const member = await createMember(world.db, 'poller-watch@example.test');
		await world.db
			.insert(t.watches)
			.values({ userId: member, converterId: await converterId(world.db, 'vantacove-beam-bridge'), minBand: 'close' });
		const listing = await world.listingId('northbay-circuits', '/products/beam-bridge');

		await pollNow(listing); // first poll: still out of stock, nothing happens
		expect(await outboxRows(world.db, member)).toHaveLength(0);

		world.clock.advance(60 * 60_000);
		await world.control('POST', '/listing', {
			shop: 'northbay-circuits',
			path: '/products/beam-bridge',
			stock: 'in_stock',
			priceMinor: 2399
		});
		await pollNow(listing);
		const rows = await outboxRows(world.db, member);
		expect(rows).toHaveLength(1);
		const [ev] = await world.db.select().from(t.stockEvents).where(eq(t.stockEvents.id, rows[0].stockEventId));
		expect(ev.kind).toBe('restock');

		// Polling the unchanged page again changes nothing.
		world.clock.advance(10 * 60_000);
		await pollNow(listing);
		expect(await outboxRows(world.db, member)).toHaveLength(1);

		await sendDue(world.db, senderOptions(mail.smtpPort));
		const got = mail.to('poller-watch@example.test');
		expect(got).toHaveLength(1);
		expect(got[0].subject).toBe('Back in stock: Vantacove Beam Bridge at Northbay Circuits, 23.99 USD');

		// Flapping one hour later: sold out, back again, inside the quiet period.
		world.clock.advance(30 * 60_000);
		await world.control('POST', '/listing', {
			shop: 'northbay-circuits',
			path: '/products/beam-bridge',
			stock: 'out_of_stock'
		});
		await pollNow(listing);
		world.clock.advance(30 * 60_000);
		await world.control('POST', '/listing', {
			shop: 'northbay-circuits',
			path: '/products/beam-bridge',
			stock: 'in_stock'
		});
		await pollNow(listing);
		const restocks = await world.db.select().from(t.stockEvents).where(eq(t.stockEvents.listingId, listing));
		expect(restocks.filter((e) => e.kind === 'restock').map((e) => e.quiet)).toEqual([false, true]);
		await sendDue(world.db, senderOptions(mail.smtpPort));
		expect(mail.to('poller-watch@example.test')).toHaveLength(1);
	});
});

describe('the daily digest', () => {
	it('gathers a digest member’s alerts into one message, once a day, and skips an empty digest', async () => {
		// The digest runs at noon UTC today, whatever the hour the suite runs at (at 23:00 a member whose hour is
		// "the next one", 00:00, would be due already).
		const digestAt = new Date();
		digestAt.setUTCHours(12, 0, 0, 0);
		const hourUtc = 12;
		const member = await createMember(world.db, 'digest@example.test', {
			alertMode: 'digest',
			timezone: 'UTC',
			digestHour: hourUtc
		});
		const later = await createMember(world.db, 'digest-later@example.test', {
			alertMode: 'digest',
			timezone: 'UTC',
			digestHour: (hourUtc + 1) % 24
		});
		await createMember(world.db, 'digest-empty@example.test', {
			alertMode: 'digest',
			timezone: 'UTC',
			digestHour: hourUtc
		});
		const phosphor = await converterId(world.db, 'morrowgate-phosphor-one');
		const pro = await converterId(world.db, 'vantacove-beam-bridge-pro');
		await world.db.insert(t.watches).values([
			{ userId: member, converterId: phosphor },
			{ userId: member, converterId: pro },
			{ userId: later, converterId: phosphor }
		]);
		world.clock.advance(60 * 60_000);
		await world.control('POST', '/listing', {
			shop: 'thamesbit',
			path: '/item/phosphor-one',
			stock: 'in_stock',
			priceMinor: 3250
		});
		await world.control('POST', '/listing', {
			shop: 'wattle-and-wire',
			path: '/shop/beam-bridge-pro',
			stock: 'in_stock'
		});
		await pollNow(await world.listingId('thamesbit', '/item/phosphor-one'));
		await pollNow(await world.listingId('wattle-and-wire', '/shop/beam-bridge-pro'));
		const rows = await outboxRows(world.db, member);
		expect(rows.map((r) => r.mode)).toEqual(['digest', 'digest']);

		// The instant sender leaves digest rows alone.
		expect((await sendDue(world.db, senderOptions(mail.smtpPort))).claimed).toBe(0);

		const report = await sendDigests(world.db, { ...senderOptions(mail.smtpPort), now: digestAt });
		expect(report).toMatchObject({ sent: 1, items: 2 });
		const got = mail.to('digest@example.test');
		expect(got).toHaveLength(1);
		expect(got[0].subject).toMatch(/^Your Scopegrade digest for \d{4}-\d{2}-\d{2}: 2 restocks$/);
		expect(got[0].text).toContain('Morrowgate Phosphor One is back in stock');
		expect(got[0].text).toContain('Vantacove Beam Bridge Pro is back in stock');
		// The digest's unsubscribe stops every alert of the member (RFC 8058 section 3.1).
		const token = /\/unsubscribe\/([^>]+)>/.exec(got[0].headers['list-unsubscribe'])![1];
		expect(verifyUnsubscribeToken(SECRET, token)).toEqual({ kind: 'all', userId: member });
		expect(got[0].headers['list-unsubscribe-post']).toBe('List-Unsubscribe=One-Click');

		expect(mail.to('digest-later@example.test')).toHaveLength(0);
		expect(mail.to('digest-empty@example.test')).toHaveLength(0);

		// Run again: nothing new, nothing sent.
		expect((await sendDigests(world.db, { ...senderOptions(mail.smtpPort), now: digestAt })).sent).toBe(0);
		expect(mail.to('digest@example.test')).toHaveLength(1);
		expect((await outboxRows(world.db, member)).every((r) => r.status === 'sent')).toBe(true);
	});
});
