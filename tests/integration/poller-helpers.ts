/**
 * Shared set-up for the poller integration tests: a fresh database seeded with the demo (no
 * synthetic history), the fake shops in-process on a random free port block, an injected clock,
 * and small helpers for the fake shops' control endpoint and request log.
 */
import { eq, and } from 'drizzle-orm';
import { freshDatabase } from './helpers/db';
import {
	startFakeShops,
	type FakeShops,
	type FakeShopsOptions,
	type RequestLogEntry
} from '../../fixtures/shops/server';
import { seedDemo } from '../../src/lib/server/db/seed';
import { listingStates, listings, shops as shopTable } from '../../src/lib/server/db/schema';
import { createPoller, type PollerOptions } from '../../src/lib/server/polling';
import type { Database } from '../../src/lib/server/db/client';

/** Scenario start on the poller's clock (seed time). */
export const T0 = new Date('2026-01-05T00:00:00.000Z');
export const TEST_UA = 'ScopegradeBot/0.1 (+http://127.0.0.1:4400/learn#polling)';

/** Start the fake shops on a random block of ports in 20000-30000, retrying when one is taken. */
export async function startShopsOnFreePorts(options: Omit<FakeShopsOptions, 'port'> = {}): Promise<FakeShops> {
	let lastErr: unknown;
	for (let attempt = 0; attempt < 15; attempt++) {
		const base = 20_000 + Math.floor(Math.random() * 1000) * 10;
		try {
			return await startFakeShops({ ...options, port: base });
		} catch (err) {
			lastErr = err;
		}
	}
	throw lastErr;
}

/** What the fake shops' control endpoint answers; each endpoint fills the members it concerns. */
export interface ControlReply {
	clock: number;
	listings: { path: string; status: string; priceMinor: number; stock: string }[];
	faults: { kind: string; source: string }[];
	requests: RequestLogEntry[];
	cleared: number;
	error: string;
}

export interface World {
	db: Database;
	url: string;
	shops: FakeShops;
	clock: { now: () => Date; set(d: Date): void; advance(ms: number): void };
	control(method: string, path: string, body?: unknown): Promise<ControlReply>;
	/** Requests the fake shops logged since the last `markRequests()` (optionally one shop's). */
	requests(shop?: string): Promise<RequestLogEntry[]>;
	markRequests(): Promise<void>;
	listingId(shop: string, path: string): Promise<number>;
	state(listingId: number): Promise<typeof listingStates.$inferSelect>;
	poller(extra?: PollerOptions): ReturnType<typeof createPoller>;
	/** Make a listing due now (next_poll_at = clock). */
	makeDue(listingId?: number): Promise<void>;
	close(): Promise<void>;
}

export async function createWorld(dbName: string, shopOptions: Omit<FakeShopsOptions, 'port'> = {}): Promise<World> {
	const database = await freshDatabase(dbName);
	const shops = await startShopsOnFreePorts(shopOptions);
	const shopsPort = Number(new URL(shops.urls.control).port);
	await seedDemo(database.db, { shopsPort, historyDays: 0, now: T0 });
	let t = T0.getTime();
	let since = 0;
	const control = async (method: string, path: string, body?: unknown) => {
		const res = await fetch(shops.urls.control + path, {
			method,
			headers: body === undefined ? undefined : { 'Content-Type': 'application/json' },
			body: body === undefined ? undefined : JSON.stringify(body)
		});
		return (await res.json()) as ControlReply;
	};
	const world: World = {
		db: database.db,
		url: database.url,
		shops,
		clock: { now: () => new Date(t), set: (d) => (t = d.getTime()), advance: (ms) => (t += ms) },
		control,
		async requests(shop) {
			const q = new URLSearchParams({ since: String(since) });
			if (shop) q.set('shop', shop);
			return (await control('GET', `/requests?${q}`)).requests;
		},
		async markRequests() {
			const all: RequestLogEntry[] = (await control('GET', '/requests')).requests;
			since = all.length ? all[all.length - 1].seq : since;
		},
		async listingId(shop, path) {
			const [row] = await database.db
				.select({ id: listings.id })
				.from(listings)
				.innerJoin(shopTable, eq(shopTable.id, listings.shopId))
				.where(and(eq(shopTable.slug, shop), eq(listings.url, shops.urls.shops[shop] + path)));
			if (!row) throw new Error(`no listing ${shop} ${path}`);
			return row.id;
		},
		async state(listingId) {
			const [row] = await database.db.select().from(listingStates).where(eq(listingStates.listingId, listingId));
			return row;
		},
		poller: (extra = {}) =>
			createPoller(database.db, {
				clock: world.clock.now,
				random: () => 0.5,
				allowPrivate: true,
				timeoutMs: 2000,
				userAgent: TEST_UA,
				...extra
			}),
		async makeDue(listingId) {
			const q = database.db.update(listingStates).set({ nextPollAt: world.clock.now() });
			await (listingId ? q.where(eq(listingStates.listingId, listingId)) : q);
		},
		async close() {
			await shops.close();
			await database.close();
		}
	};
	return world;
}

/** Set every shop's min spacing (ms) — the seed's 250 ms would make long scripted runs slow. */
export async function setSpacing(db: Database, ms: number) {
	await db.update(shopTable).set({ minSpacingMs: ms });
}
