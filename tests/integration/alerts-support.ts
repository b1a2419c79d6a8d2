/**
 * Shared set-up for the alert integration tests: a fresh seeded database, the real fake SMTP
 * server on free ports of our own (so a test can stop and start it), and a scripted stock
 * change that writes an observation + stock_event and calls the alert hook in the same
 * transaction, as the poller does.
 */
import { createServer } from 'node:net';
import { and, desc, eq, sql } from 'drizzle-orm';
import { startFakeMail, type StoredMessage } from '../../fixtures/mail/server';
import type { Database } from '../../src/lib/server/db/client';
import * as t from '../../src/lib/server/db/schema';
import { seedDemo } from '../../src/lib/server/db/seed';
import { isBuyable, type StockState } from '../../src/lib/pricing';
import type { StockEventInput, StockEventsHook } from '../../src/lib/server/alerts/match';
import type { SenderOptions } from '../../src/lib/server/alerts/sender';
import { freshDatabase } from './helpers/db';

export const SECRET = 'alerts-test-secret-0123456789abcdef';
export const BASE_URL = 'https://scopegrade.example';

export async function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = createServer();
		s.once('error', reject);
		s.listen(0, '127.0.0.1', () => {
			const port = (s.address() as { port: number }).port;
			s.close(() => resolve(port));
		});
	});
}

/** A fresh, migrated and seeded database (no synthetic history: stock events are ours). */
export async function seededDatabase(name: string) {
	const fresh = await freshDatabase(name);
	await seedDemo(fresh.db, { shopsPort: 5610, historyDays: 0 });
	return fresh;
}

/** The fake SMTP + inbox on ports of our own; stop() and start() keep the same ports. */
export async function fakeMail() {
	const smtpPort = await freePort();
	const httpPort = await freePort();
	let server: Awaited<ReturnType<typeof startFakeMail>> | null = null;
	const kept: StoredMessage[] = [];
	const handle = {
		smtpPort,
		httpPort,
		async start() {
			server = await startFakeMail({ smtpPort, httpPort, quiet: true });
		},
		async stop() {
			if (!server) return;
			kept.push(...server.messages);
			await server.close();
			server = null;
		},
		/** Every message received so far (across restarts), oldest first. */
		all(): StoredMessage[] {
			return [...kept, ...(server?.messages ?? [])];
		},
		to(email: string): StoredMessage[] {
			return handle.all().filter((m) => m.to.includes(email.toLowerCase()));
		},
		async inboxJson(email: string): Promise<StoredMessage[]> {
			const res = await fetch(`http://127.0.0.1:${httpPort}/api/messages?to=${encodeURIComponent(email)}`);
			return (await res.json()) as StoredMessage[];
		}
	};
	await handle.start();
	return handle;
}

export function senderOptions(smtpPort: number, extra: Partial<SenderOptions> = {}): SenderOptions {
	return {
		smtp: { host: '127.0.0.1', port: smtpPort, secure: false, from: 'Scopegrade <alerts@scopegrade.test>' },
		baseUrl: BASE_URL,
		secret: SECRET,
		backoffBaseMs: 20,
		backoffMaxMs: 200,
		...extra
	};
}

export async function createMember(db: Database, email: string, pref?: Partial<typeof t.memberPrefs.$inferInsert>) {
	const [u] = await db
		.insert(t.users)
		.values({ email, name: email.split('@')[0] })
		.returning({ id: t.users.id });
	if (pref) await db.insert(t.memberPrefs).values({ userId: u.id, ...pref });
	return u.id;
}

export async function converterId(db: Database, slug: string) {
	const [c] = await db.select({ id: t.converters.id }).from(t.converters).where(eq(t.converters.slug, slug));
	return c.id;
}

export async function listingId(db: Database, shopSlug: string, converterSlug: string) {
	const [row] = await db
		.select({ id: t.listings.id })
		.from(t.listings)
		.innerJoin(t.shops, eq(t.shops.id, t.listings.shopId))
		.innerJoin(t.converters, eq(t.converters.id, t.listings.converterId))
		.where(and(eq(t.shops.slug, shopSlug), eq(t.converters.slug, converterSlug)));
	return row.id;
}

/**
 * Change a listing's stock/price as a poll would: one observation, the stock event it implies,
 * the listing_state update and the hook, all in one transaction. Returns the event (or null).
 */
export async function scriptChange(
	db: Database,
	hook: StockEventsHook,
	change: { listingId: number; stock: StockState; priceMinor?: number; at: Date }
): Promise<StockEventInput | null> {
	return db.transaction(async (tx) => {
		const [state] = await tx.select().from(t.listingStates).where(eq(t.listingStates.listingId, change.listingId));
		const [shop] = await tx
			.select({ currency: t.shops.currency })
			.from(t.listings)
			.innerJoin(t.shops, eq(t.shops.id, t.listings.shopId))
			.where(eq(t.listings.id, change.listingId));
		const price = change.priceMinor ?? state.currentPriceMinor ?? 1000;
		const [obs] = await tx
			.insert(t.observations)
			.values({
				listingId: change.listingId,
				observedAt: change.at,
				priceMinor: price,
				currency: shop.currency,
				stock: change.stock
			})
			.returning({ id: t.observations.id });
		const was = isBuyable(state.currentStock);
		const now = isBuyable(change.stock);
		const kind =
			!was && now
				? 'restock'
				: was && !now
					? 'sellout'
					: now && state.currentPriceMinor != null && price < state.currentPriceMinor
						? 'price_drop'
						: null;
		await tx
			.update(t.listingStates)
			.set({
				currentStock: change.stock,
				currentPriceMinor: price,
				currentCurrency: shop.currency,
				currentSince: change.at,
				lastCheckedAt: change.at,
				lastSuccessAt: change.at
			})
			.where(eq(t.listingStates.listingId, change.listingId));
		if (!kind) return null;
		const [ev] = await tx
			.insert(t.stockEvents)
			.values({
				listingId: change.listingId,
				observationId: obs.id,
				kind,
				at: change.at,
				priceMinor: price,
				currency: shop.currency,
				previousStock: state.currentStock
			})
			.returning();
		const input: StockEventInput = {
			id: ev.id,
			listingId: ev.listingId,
			kind: ev.kind,
			at: ev.at,
			priceMinor: ev.priceMinor,
			currency: ev.currency,
			previousStock: ev.previousStock
		};
		await hook(tx, [input]);
		return input;
	});
}

export async function outboxRows(db: Database, userId?: string) {
	return db
		.select()
		.from(t.alertOutbox)
		.where(userId ? eq(t.alertOutbox.userId, userId) : sql`true`)
		.orderBy(desc(t.alertOutbox.id));
}

export const minutes = (n: number) => n * 60_000;
export const hours = (n: number) => n * 3_600_000;
