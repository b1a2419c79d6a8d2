/**
 * The sender is woken by the poller's commit: the alert hook sends NOTIFY inside the poll's
 * transaction, so a listener hears it once the outbox rows are committed, and never when the
 * transaction rolls back (PostgreSQL documentation, NOTIFY: "if a NOTIFY is executed inside a
 * transaction, the notify events are not delivered until and unless the transaction is committed").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import postgres from 'postgres';
import * as t from '../../src/lib/server/db/schema';
import { createAlertHook } from '../../src/lib/server/alerts/match';
import { listenForOutbox, serialRunner } from '../../jobs/wake';
import { createWorld, setSpacing, type World } from './poller-helpers';
import { converterId, createMember, outboxRows } from './alerts-support';

let world: World;
let listener: postgres.Sql;

beforeAll(async () => {
	world = await createWorld('sg_it_alerts_wake');
	await setSpacing(world.db, 0);
	listener = postgres(world.url, { max: 1, onnotice: () => {} });
});
afterAll(async () => {
	await listener?.end({ timeout: 5 });
	await world?.close();
});

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('NOTIFY from the poller transaction', () => {
	it('wakes a listener after the restock commits, with the outbox rows already there; a rolled-back poll wakes nobody', async () => {
		const member = await createMember(world.db, 'wake@example.test');
		await world.db
			.insert(t.watches)
			.values({ userId: member, converterId: await converterId(world.db, 'vantacove-beam-bridge') });
		const listing = await world.listingId('northbay-circuits', '/products/beam-bridge');
		const poll = async (hook = createAlertHook({ quietHours: 12 })) => {
			await world.db
				.update(t.listingStates)
				.set({ pollRequestedAt: world.clock.now() })
				.where(eq(t.listingStates.listingId, listing));
			const p = world.poller({ onStockEvents: hook });
			const r = await p.pollListing(listing);
			await p.release();
			return r;
		};
		await poll(); // known out of stock

		const seenRows: number[] = [];
		let wakes = 0;
		const unlisten = await listenForOutbox(listener, () => {
			wakes++;
			void outboxRows(world.db, member).then((rows) => seenRows.push(rows.length));
		});
		await sleep(200);
		const afterConnect = wakes; // the listener wakes once on connect (missed notifications)
		expect(afterConnect).toBe(1);

		// A hook that writes the rows, notifies, then fails: rolled back, so no notification.
		world.clock.advance(3_600_000);
		await world.control('POST', '/listing', {
			shop: 'northbay-circuits',
			path: '/products/beam-bridge',
			stock: 'in_stock'
		});
		const real = createAlertHook({ quietHours: 12 });
		const failing = await poll(async (tx, events) => {
			await real(tx, events);
			throw new Error('later step failed');
		});
		expect(failing).toMatchObject({ skipped: 'write_failed' });
		await sleep(500);
		expect(wakes).toBe(afterConnect);

		const ok = await poll();
		expect(ok).toMatchObject({ changed: true });
		for (let i = 0; i < 100 && seenRows.length < 2; i++) await sleep(50);
		expect(wakes).toBe(afterConnect + 1);
		expect(seenRows).toEqual([0, 1]); // at connect: nothing; woken by the commit: the row is there
		await unlisten();
	});
});

describe('serialRunner', () => {
	it('never overlaps runs and folds the calls made during a run into one more run', async () => {
		let active = 0;
		let maxActive = 0;
		let runs = 0;
		const run = serialRunner(async () => {
			active++;
			maxActive = Math.max(maxActive, active);
			runs++;
			await sleep(30);
			active--;
		});
		await Promise.all([run(), run(), run(), run()]);
		await sleep(100);
		expect(maxActive).toBe(1);
		expect(runs).toBe(2);
	});
});
