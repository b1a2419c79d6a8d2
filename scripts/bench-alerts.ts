/**
 * `npm run bench:alerts`, three measurements in one run:
 * 1. Fan-out of one restock to 10,000 watchers of one converter: the time from the restock event to
 *    all outbox rows written (the matching runs in the event's transaction, so this is the commit
 *    latency the poller sees).
 * 2. Messages per second the sender delivers through the local fake SMTP server, against the same
 *    server's own acceptance rate with a bare pooled nodemailer client at the same concurrency (the
 *    ceiling, measured just before and after the sender and averaged):
 *    `sender share of the SMTP ceiling: <ratio>`.
 * 3. End to end with the jobs process's default schedules (poller every 30 s, sender woken by the
 *    poller's NOTIFY, cron every 20 s as a safety net): a fake shop restocks a watched listing whose
 *    next poll is due at that moment, at random instants against the cron phase, until the message is
 *    accepted by the fake SMTP server. Prints the median and 95th percentile
 *    (`restock to accepted alert, p95: <s> s`). How soon a listing is due at all is bench:detection's
 *    subject.
 *
 * Runs on the benchmarks' own cluster (port 54350 + SG_PORT_OFFSET; fake SMTP 4525 and inbox 4501,
 * fake shops 4510-4515, all + SG_PORT_OFFSET), or on BENCH_ADMIN_DATABASE_URL. Options:
 * BENCH_WATCHERS (10000), BENCH_CONCURRENCY (8), BENCH_BATCH (200), BENCH_E2E_ROUNDS (2: each
 * restocks all 16 demo listings once; quiet period off so a second restock alerts too).
 */
import { eq, inArray } from 'drizzle-orm';
import nodemailer from 'nodemailer';
import postgres from 'postgres';
import { startFakeMail } from '../fixtures/mail/server';
import { createDb } from '../src/lib/server/db/client';
import { applyMigrations } from '../src/lib/server/db/migrate';
import * as t from '../src/lib/server/db/schema';
import { seedDemo } from '../src/lib/server/db/seed';
import { matchStockEvents } from '../src/lib/server/alerts/match';
import { buildAlertMail, createAlertTransport } from '../src/lib/server/alerts/sender';
import { drainOutbox } from '../jobs/sender';
import { loadOutboxContexts } from '../src/lib/server/alerts/view';
import { transportOptions } from '../src/lib/server/mail/transport';
import { startFakeShops } from '../fixtures/shops/server';
import { LISTINGS } from '../src/lib/demo/scenario';
import { createPoller } from '../src/lib/server/polling';
import { startJobs } from '../jobs/jobs';
// @ts-expect-error plain ES module without types
import { profile } from './lib/profiles.mjs';
// @ts-expect-error plain ES module without types
import { startCluster, stopCluster } from './lib/bootstrap.mjs';

const WATCHERS = Number(process.env.BENCH_WATCHERS || 10_000);
const CONCURRENCY = Number(process.env.BENCH_CONCURRENCY || 8);
const BATCH = Number(process.env.BENCH_BATCH || 200);
const ROUNDS = Number(process.env.BENCH_E2E_ROUNDS || 2);
const NAME = 'sg_bench_alerts';
const E2E_NAME = 'sg_bench_alerts_e2e';
/** The benchmarks' cluster and ports, moved by SG_PORT_OFFSET. */
const bench = profile('bench');
let ownCluster = false;

async function adminUrl(): Promise<string> {
	if (process.env.BENCH_ADMIN_DATABASE_URL) return process.env.BENCH_ADMIN_DATABASE_URL;
	const probe = postgres(bench.adminUrl, { max: 1, connect_timeout: 3, onnotice: () => {} });
	try {
		await probe`select 1`;
	} catch {
		console.log(`starting the benchmarks' PostgreSQL cluster (port ${bench.pgPort})…`);
		await startCluster(bench, { fast: true });
		ownCluster = true;
	} finally {
		await probe.end();
	}
	return bench.adminUrl;
}

async function freshDatabase(name: string): Promise<string> {
	const root = postgres(await adminUrl(), { max: 1, onnotice: () => {} });
	await root.unsafe(`drop database if exists ${name} with (force)`);
	await root.unsafe(`create database ${name}`);
	await root.end();
	const url = new URL(await adminUrl());
	url.pathname = `/${name}`;
	await applyMigrations(url.toString());
	return url.toString();
}

const quantile = (xs: number[], q: number) => {
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))];
};

async function main() {
	const { db, sql } = createDb(await freshDatabase(NAME), { max: 10 });
	try {
		await seedDemo(db, { shopsPort: 5610, historyDays: 0 });
		const [conv] = await db
			.select({ id: t.converters.id })
			.from(t.converters)
			.where(eq(t.converters.slug, 'vantacove-beam-bridge'));
		const [listing] = await db
			.select({ id: t.listings.id, shopId: t.listings.shopId })
			.from(t.listings)
			.where(eq(t.listings.converterId, conv.id))
			.limit(1);

		console.log(`creating ${WATCHERS} watchers…`);
		for (let i = 0; i < WATCHERS; i += 2000) {
			const users = await db
				.insert(t.users)
				.values(
					Array.from({ length: Math.min(2000, WATCHERS - i) }, (_, k) => ({ email: `bench-${i + k}@example.test` }))
				)
				.returning({ id: t.users.id });
			await db.insert(t.watches).values(
				users.map((u, k) => ({
					userId: u.id,
					converterId: conv.id,
					minBand: (k % 3 === 0 ? 'close' : null) as t.Band | null
				}))
			);
		}

		// The restock: observation + stock event + matching, in one transaction, as the poller does.
		const started = performance.now();
		let created = 0;
		let matchMs = 0;
		await db.transaction(async (tx) => {
			const at = new Date();
			const [obs] = await tx
				.insert(t.observations)
				.values({ listingId: listing.id, observedAt: at, priceMinor: 2399, currency: 'USD', stock: 'in_stock' })
				.returning({ id: t.observations.id });
			const [ev] = await tx
				.insert(t.stockEvents)
				.values({
					listingId: listing.id,
					observationId: obs.id,
					kind: 'restock',
					at,
					priceMinor: 2399,
					currency: 'USD',
					previousStock: 'out_of_stock'
				})
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
	}
}

const { db, sql, created, fanoutMs, matchMs } = await main();
const mail = await startFakeMail({ smtpPort: bench.smtpPort, httpPort: bench.inboxPort, quiet: true });
const smtp = { host: '127.0.0.1', port: bench.smtpPort, secure: false, from: 'Scopegrade <alerts@scopegrade.test>' };
const senderBase = { smtp, baseUrl: 'http://127.0.0.1:4300', secret: 'bench-secret-0123456789abcdef' };

/**
 * The ceiling: the fake SMTP server's acceptance rate for the same kind of message (a rendered alert)
 * from a bare pooled nodemailer client with the sender's connection count and parallelism, no database.
 */
async function smtpCeiling(count: number): Promise<number> {
	const [row] = await db.select({ id: t.alertOutbox.id }).from(t.alertOutbox).limit(1);
	const [ctx] = await loadOutboxContexts(db, [row.id], { baseUrl: senderBase.baseUrl, rates: {} });
	const message = buildAlertMail(ctx, senderBase);
	const bare = nodemailer.createTransport({
		...transportOptions(smtp),
		pool: true,
		maxConnections: CONCURRENCY,
		maxMessages: 500
	});
	let next = 0;
	const t0 = performance.now();
	await Promise.all(
		Array.from({ length: CONCURRENCY }, async () => {
			for (let i = next++; i < count; i = next++)
				await bare.sendMail({ ...message, to: `ceiling-${i}@example.test`, messageId: undefined });
		})
	);
	const rate = count / ((performance.now() - t0) / 1000);
	bare.close();
	return rate;
}

const ceilingCount = Math.min(2000, Math.max(200, Math.round(created / 5)));
await smtpCeiling(100); // warm-up
const ceilingBefore = await smtpCeiling(ceilingCount);
const transport = createAlertTransport(smtp, CONCURRENCY);
const s0 = performance.now();
// The jobs process's own drain (two lanes over one pooled transport).
const { sent } = await drainOutbox(
	db,
	{ ...senderBase, batchSize: BATCH, concurrency: CONCURRENCY, transport },
	Infinity
);
const sendMs = performance.now() - s0;
transport.close();
const ceilingAfter = await smtpCeiling(ceilingCount);
const senderRate = sent / (sendMs / 1000);
const ceiling = (ceilingBefore + ceilingAfter) / 2;
await sql.end();

console.log('');
console.log(`watchers on one converter:          ${WATCHERS}`);
console.log(`outbox rows written:                ${created}`);
console.log(
	`restock event -> all outbox rows:   ${fanoutMs.toFixed(0)} ms (matching insert ${matchMs.toFixed(0)} ms, committed with the event)`
);
console.log(
	`messages through the fake SMTP:     ${sent} in ${(sendMs / 1000).toFixed(1)} s = ${senderRate.toFixed(0)} messages/s (concurrency ${CONCURRENCY}, batch ${BATCH})`
);
console.log(
	`SMTP ceiling (bare pooled client):  ${ceilingBefore.toFixed(0)} messages/s before, ${ceilingAfter.toFixed(0)} after (${ceilingCount} messages each, ${CONCURRENCY} connections)`
);
console.log(`sender share of the SMTP ceiling: ${(senderRate / ceiling).toFixed(2)}`);

// ---------------------------------------------------------------- end to end, default schedules
console.log('\nend to end: restock at a fake shop -> alert accepted by the fake SMTP server (default schedules)…');
const e2eUrl = await freshDatabase(E2E_NAME);
const e2e = createDb(e2eUrl, { max: 6 });
const shops = await startFakeShops({ port: bench.shopsPort });
const delays: number[] = [];
try {
	await seedDemo(e2e.db, { shopsPort: bench.shopsPort, historyDays: 0 });
	// One watcher per listing: a watch on its converter at its shop only, so each message names one restock.
	const rows = await e2e.db
		.select({ id: t.listings.id, url: t.listings.url, converterId: t.listings.converterId, shopId: t.listings.shopId })
		.from(t.listings);
	const demo = LISTINGS.map((l) => ({
		...l,
		row: rows.find((r) => r.url === shops.urls.shops[l.shop] + l.path)!
	})).filter((l) => l.row);
	const users = await e2e.db
		.insert(t.users)
		.values(demo.map((l) => ({ email: `e2e-${l.row.id}@example.test` })))
		.returning({ id: t.users.id, email: t.users.email });
	await e2e.db
		.insert(t.watches)
		.values(demo.map((l, i) => ({ userId: users[i].id, converterId: l.row.converterId, shopIds: [l.row.shopId] })));
	await e2e.db.update(t.shops).set({ minSpacingMs: 0 });
	const control = (body: unknown) =>
		fetch(`${shops.urls.control}/listing`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: JSON.stringify(body)
		}).then((r) => r.json());
	const setAll = async (stock: 'out_of_stock' | 'in_stock') => {
		for (const l of demo) await control({ shop: l.shop, path: l.path, stock });
	};
	const makeDue = (ids: number[]) =>
		e2e.db.update(t.listingStates).set({ nextPollAt: new Date() }).where(inArray(t.listingStates.listingId, ids));

	// Everything out of stock and known to be: one poll of everything before the jobs start.
	await setAll('out_of_stock');
	await makeDue(demo.map((l) => l.row.id));
	await createPoller(e2e.db, { allowPrivate: true }).drain();

	const env = {
		...process.env,
		DATABASE_URL: e2eUrl,
		SMTP_HOST: '127.0.0.1',
		SMTP_PORT: String(bench.smtpPort),
		MAIL_FROM: smtp.from,
		PUBLIC_BASE_URL: 'http://127.0.0.1:4300',
		AUTH_SECRET: 'bench-secret-0123456789abcdef',
		FEED_ALLOW_PRIVATE: 'true',
		// A second round restocks the same listings within hours: no quiet period, so each restock alerts.
		ALERT_QUIET_HOURS: '0',
		SENDER_CRON: '',
		DIGEST_CRON: ''
	};
	const jobs = await startJobs(e2e.db, e2e.sql, env, { log: () => {}, poller: { allowPrivate: true } });
	const accepted = () =>
		new Map(mail.messages.filter((m) => m.to.some((a) => a.startsWith('e2e-'))).map((m) => [m.to[0], m] as const));
	try {
		for (let round = 1; round <= ROUNDS; round++) {
			if (round > 1) {
				// Sold out again and seen so by the poller (sell-outs alert nobody).
				await setAll('out_of_stock');
				await makeDue(demo.map((l) => l.row.id));
				for (let i = 0; i < 120; i++) {
					const st = await e2e.db
						.select({ s: t.listingStates.currentStock })
						.from(t.listingStates)
						.where(
							inArray(
								t.listingStates.listingId,
								demo.map((l) => l.row.id)
							)
						);
					if (st.every((x) => x.s === 'out_of_stock')) break;
					await new Promise((r) => setTimeout(r, 1000));
				}
				mail.messages.splice(0, mail.messages.length);
			}
			// Restocks at random instants over two minutes, so they fall on every phase of the cron ticks.
			const restockedAt = new Map<string, number>();
			await Promise.all(
				demo.map(async (l) => {
					await new Promise((r) => setTimeout(r, Math.random() * 120_000));
					await control({ shop: l.shop, path: l.path, stock: 'in_stock' });
					await makeDue([l.row.id]);
					restockedAt.set(`e2e-${l.row.id}@example.test`, Date.now());
				})
			);
			const deadline = Date.now() + 180_000;
			while (accepted().size < demo.length && Date.now() < deadline) await new Promise((r) => setTimeout(r, 500));
			const got = accepted();
			for (const [to, at] of restockedAt) {
				const m = got.get(to);
				delays.push(m ? (Date.parse(m.receivedAt) - at) / 1000 : Infinity);
			}
			console.log(`round ${round}: ${got.size} of ${demo.length} alerts accepted`);
		}
	} finally {
		await jobs.stop();
	}
} finally {
	await shops.close();
	await e2e.sql.end({ timeout: 5 });
}
const finite = delays.filter(Number.isFinite);
console.log(`restocks: ${delays.length}, alerts accepted: ${finite.length}`);
console.log(`restock to accepted alert, median: ${quantile(delays, 0.5).toFixed(1)} s`);
console.log(`restock to accepted alert, p95: ${quantile(delays, 0.95).toFixed(1)} s (goal <= 60 s)`);
console.log(`sender share of the SMTP ceiling: ${(senderRate / ceiling).toFixed(2)}`);

await mail.close();
const root = postgres(await adminUrl(), { max: 1, onnotice: () => {} });
await root.unsafe(`drop database if exists ${NAME} with (force)`);
await root.unsafe(`drop database if exists ${E2E_NAME} with (force)`);
await root.end();
if (ownCluster) stopCluster(bench);
