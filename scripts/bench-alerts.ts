/**
 * `npm run bench:alerts`: fan-out of one restock to 10,000 watchers of one converter.
 * Prints (1) the time from the restock event to all outbox rows written (the matching runs in
 * the event's transaction, so this is the commit latency the poller sees) and (2) messages per
 * second through the local fake SMTP server.
 *
 * Uses a scratch database `sg_bench_alerts` on the development cluster (started if needed), or on
 * BENCH_ADMIN_DATABASE_URL. Options: BENCH_WATCHERS (10000), BENCH_CONCURRENCY (8), BENCH_BATCH (200).
 */
import { createServer } from 'node:net';
import { eq } from 'drizzle-orm';
import postgres from 'postgres';
import { startFakeMail } from '../fixtures/mail/server';
import { createDb } from '../src/lib/server/db/client';
import { applyMigrations } from '../src/lib/server/db/migrate';
import * as t from '../src/lib/server/db/schema';
import { seedDemo } from '../src/lib/server/db/seed';
import { matchStockEvents } from '../src/lib/server/alerts/match';
import { createAlertTransport, sendDue } from '../src/lib/server/alerts/sender';
// @ts-expect-error plain ES module without types
import { profile } from './lib/profiles.mjs';
// @ts-expect-error plain ES module without types
import { startCluster } from './lib/bootstrap.mjs';

const WATCHERS = Number(process.env.BENCH_WATCHERS || 10_000);
const CONCURRENCY = Number(process.env.BENCH_CONCURRENCY || 8);
const BATCH = Number(process.env.BENCH_BATCH || 200);
const NAME = 'sg_bench_alerts';

const freePort = () =>
	new Promise<number>((resolve) => {
		const s = createServer();
		s.listen(0, '127.0.0.1', () => {
			const port = (s.address() as { port: number }).port;
			s.close(() => resolve(port));
		});
	});

async function adminUrl(): Promise<string> {
	if (process.env.BENCH_ADMIN_DATABASE_URL) return process.env.BENCH_ADMIN_DATABASE_URL;
	const p = profile('dev');
	const probe = postgres(p.adminUrl, { max: 1, connect_timeout: 3, onnotice: () => {} });
	try {
		await probe`select 1`;
	} catch {
		console.log('starting the development PostgreSQL cluster…');
		await startCluster(p, { fast: false });
	} finally {
		await probe.end();
	}
	return p.adminUrl;
}

async function main() {
	const admin = await adminUrl();
	const root = postgres(admin, { max: 1, onnotice: () => {} });
	await root.unsafe(`drop database if exists ${NAME} with (force)`);
	await root.unsafe(`create database ${NAME}`);
	const url = new URL(admin);
	url.pathname = `/${NAME}`;
	await applyMigrations(url.toString());
	const { db, sql } = createDb(url.toString(), { max: 10 });
	try {
		await seedDemo(db, { shopsPort: 5610, historyDays: 0 });
		const [conv] = await db.select({ id: t.converters.id }).from(t.converters).where(eq(t.converters.slug, 'vantacove-beam-bridge'));
		const [listing] = await db.select({ id: t.listings.id, shopId: t.listings.shopId }).from(t.listings).where(eq(t.listings.converterId, conv.id)).limit(1);

		console.log(`creating ${WATCHERS} watchers…`);
		for (let i = 0; i < WATCHERS; i += 2000) {
			const users = await db
				.insert(t.users)
				.values(Array.from({ length: Math.min(2000, WATCHERS - i) }, (_, k) => ({ email: `bench-${i + k}@example.test` })))
				.returning({ id: t.users.id });
			await db.insert(t.watches).values(users.map((u, k) => ({ userId: u.id, converterId: conv.id, minBand: (k % 3 === 0 ? 'close' : null) as t.Band | null })));
		}

		// The restock: observation + stock event + matching, in one transaction, as the poller does.
		const started = performance.now();
		let created = 0;
		let matchMs = 0;
		await db.transaction(async (tx) => {
			const at = new Date();
			const [obs] = await tx.insert(t.observations).values({ listingId: listing.id, observedAt: at, priceMinor: 2399, currency: 'USD', stock: 'in_stock' }).returning({ id: t.observations.id });
			const [ev] = await tx
				.insert(t.stockEvents)
				.values({ listingId: listing.id, observationId: obs.id, kind: 'restock', at, priceMinor: 2399, currency: 'USD', previousStock: 'out_of_stock' })
				.returning();
			const m0 = performance.now();
			const [r] = await matchStockEvents(tx, [{ ...ev }], { quietHours: 12 });
			matchMs = performance.now() - m0;
			created = r.created;
		});
		const fanoutMs = performance.now() - started;
		return { db, sql, created, fanoutMs, matchMs };
	} catch (err) {
		await sql.end();
		throw err;
	} finally {
		await root.end();
	}
}

const { db, sql, created, fanoutMs, matchMs } = await main();
// Send through a fresh fake SMTP server whose ports we know.
const smtpPort = await freePort();
const mail = await startFakeMail({ smtpPort, httpPort: await freePort(), quiet: true });
const smtp = { host: '127.0.0.1', port: smtpPort, secure: false, from: 'Scopegrade <alerts@scopegrade.test>' };
const transport = createAlertTransport(smtp, CONCURRENCY);
const s0 = performance.now();
let sent = 0;
for (;;) {
	const r = await sendDue(db, { smtp, baseUrl: 'http://127.0.0.1:4300', secret: 'bench-secret-0123456789abcdef', batchSize: BATCH, concurrency: CONCURRENCY, transport });
	sent += r.sent;
	if (r.claimed === 0) break;
}
const sendMs = performance.now() - s0;
transport.close();

console.log('');
console.log(`watchers on one converter:          ${WATCHERS}`);
console.log(`outbox rows written:                ${created}`);
console.log(`restock event -> all outbox rows:   ${fanoutMs.toFixed(0)} ms (matching insert ${matchMs.toFixed(0)} ms, committed with the event)`);
console.log(`messages through the fake SMTP:     ${sent} in ${(sendMs / 1000).toFixed(1)} s = ${(sent / (sendMs / 1000)).toFixed(0)} messages/s (concurrency ${CONCURRENCY}, batch ${BATCH})`);
console.log(`messages received by the fake SMTP: ${mail.messages.length}${mail.messages.length < sent ? ' (the inbox keeps the newest 2000)' : ''}`);
await mail.close();
await sql.end();
const root = postgres(await adminUrl(), { max: 1, onnotice: () => {} });
await root.unsafe(`drop database if exists ${NAME} with (force)`);
await root.end();
