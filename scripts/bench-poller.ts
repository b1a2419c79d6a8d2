/**
 * Poller benchmark (a script, not a test): load N listings across the five fake shops, give every
 * shop answer an artificial latency, poll them all, and compare listings per second with the ceiling
 * the per-shop limits allow (shops x max_concurrency / latency, or 1 / min_spacing when that is lower).
 * A second pass over the same listings shows what storage costs when nothing changed.
 *
 *   npm run bench:poller
 *   BENCH_LISTINGS=5000 BENCH_LATENCY_MS=100 BENCH_CONCURRENCY=4 BENCH_WORKERS=2 npm run bench:poller
 *   DATABASE_URL=postgres://... npm run bench:poller   # use that database (bench rows are removed after)
 *
 * Without DATABASE_URL it starts its own PostgreSQL cluster in .data/bench (port 54350, like the
 * test cluster but apart from it, so it can run beside `npm test`), in a fresh database.
 */
import { inArray, like, sql } from 'drizzle-orm';
import postgres from 'postgres';
import { resolve } from 'node:path';
// @ts-expect-error plain ESM helpers shared with the start and test scripts
import { profile, ROOT } from './lib/profiles.mjs';
// @ts-expect-error plain ESM helpers shared with the start and test scripts
import { startCluster, stopCluster } from './lib/bootstrap.mjs';
import { createDb } from '../src/lib/server/db/client';
import { applyMigrations } from '../src/lib/server/db/migrate';
import { seedDemo } from '../src/lib/server/db/seed';
import { converters, listingStates, listings, observations, pollCounts, shops, stockEvents } from '../src/lib/server/db/schema';
import { SHOPS, SHOP_API_MAPPINGS, SHOP_SELECTORS } from '../src/lib/demo/scenario';
import { createPoller, type RunSummary } from '../src/lib/server/polling';
import { startFakeShops, type FakeShops } from '../fixtures/shops/server';

const N = Number(process.env.BENCH_LISTINGS ?? 2000);
const LATENCY_MS = Number(process.env.BENCH_LATENCY_MS ?? 50);
const CONCURRENCY = Number(process.env.BENCH_CONCURRENCY ?? 4);
const SPACING_MS = Number(process.env.BENCH_SPACING_MS ?? 0);
const WORKERS = Number(process.env.BENCH_WORKERS ?? 1);
const BENCH_PREFIX = 'bench-';

function benchProfile() {
	const base = profile('test');
	const dataDir = resolve(ROOT, '.data', 'bench');
	return { ...base, name: 'bench', pgPort: 54350, dataDir, pgDataDir: resolve(dataDir, 'pg'), pgLog: resolve(dataDir, 'postgres.log'), pgSocketDir: '/tmp/sg-pg-54350', databaseUrl: base.databaseUrl.replace(':54340/', ':54350/').replace(/\/[^/]+$/, '/scopegrade_bench'), adminUrl: base.adminUrl.replace(':54340/', ':54350/') };
}

async function startShops(): Promise<FakeShops> {
	for (let i = 0; ; i++) {
		try {
			return await startFakeShops({ port: 30_000 + Math.floor(Math.random() * 1000) * 10, bench: true, latencyMs: LATENCY_MS });
		} catch (err) {
			if (i > 10) throw err;
		}
	}
}

async function rowCounts(db: ReturnType<typeof createDb>['db'], shopIds: number[]) {
	const [row] = await db.execute<{ obs: number; ev: number; pc: number }>(sql`
		select
			(select count(*)::int from ${observations} o join ${listings} l on l.id = o.listing_id where l.shop_id in ${shopIds}) as obs,
			(select count(*)::int from ${stockEvents} e join ${listings} l on l.id = e.listing_id where l.shop_id in ${shopIds}) as ev,
			(select count(*)::int from ${pollCounts} where shop_id in ${shopIds}) as pc`);
	return row;
}

async function main() {
	let url = process.env.DATABASE_URL;
	let cluster: ReturnType<typeof benchProfile> | null = null;
	if (!url) {
		cluster = benchProfile();
		console.log(`starting a scratch PostgreSQL cluster in ${cluster.pgDataDir} (port ${cluster.pgPort})…`);
		await startCluster(cluster, { fast: true });
		const admin = postgres(cluster.adminUrl, { max: 1, onnotice: () => {} });
		await admin.unsafe('drop database if exists scopegrade_bench with (force)');
		await admin.unsafe('create database scopegrade_bench');
		await admin.end();
		url = cluster.databaseUrl;
	}
	const fake = await startShops();
	const shopsPort = Number(new URL(fake.urls.control).port);
	const main = createDb(url, { max: 4 });
	try {
		await applyMigrations(url);
		// Converters are all the bench needs from the demo; a database that has some keeps its own.
		if (!(await main.db.select({ id: converters.id }).from(converters).limit(1)).length) await seedDemo(main.db, { shopsPort, historyDays: 0 });
		const convIds = (await main.db.select({ id: converters.id }).from(converters)).map((c) => c.id);
		// Bench shops mirror the demo shops' formats and feed configs, pointing at this run's fake shops.
		const created = await main.db
			.insert(shops)
			.values(
				SHOPS.map((s) => ({
					slug: `${BENCH_PREFIX}${s.slug}`,
					name: `Bench ${s.name}`,
					region: s.region,
					currency: s.currency,
					shipsTo: s.shipsTo,
					baseUrl: fake.urls.shops[s.slug],
					defaultFormat: s.format,
					feedConfig: s.format === 'api' ? { apiMapping: SHOP_API_MAPPINGS[s.slug] } : SHOP_SELECTORS[s.slug] ? { selectors: SHOP_SELECTORS[s.slug] } : {},
					maxConcurrency: CONCURRENCY,
					minSpacingMs: SPACING_MS
				}))
			)
			.returning({ id: shops.id, slug: shops.slug, format: shops.defaultFormat, baseUrl: shops.baseUrl });
		const shopIds = created.map((s) => s.id);
		// Only bench listings take part.
		const paused = await main.db
			.update(listings)
			.set({ active: false })
			.where(sql`${listings.active} and ${listings.shopId} not in ${shopIds}`)
			.returning({ id: listings.id });
		const rows = Array.from({ length: N }, (_, i) => {
			const s = created[i % created.length];
			return { shopId: s.id, converterId: convIds[i % convIds.length], url: `${s.baseUrl}/bench/${i}`, format: s.format, pollIntervalMinutes: 60 };
		});
		const start = new Date();
		for (let i = 0; i < rows.length; i += 1000) {
			const ids = await main.db.insert(listings).values(rows.slice(i, i + 1000)).returning({ id: listings.id });
			await main.db.insert(listingStates).values(ids.map(({ id }) => ({ listingId: id, nextPollAt: start })));
		}

		let t = start.getTime();
		const clock = () => new Date(t);
		const pools = Array.from({ length: WORKERS }, () => createDb(url, { max: 10 }));
		const pollers = pools.map((p, i) => createPoller(p.db, { workerId: `bench-${i}`, clock, allowPrivate: true, random: () => 0.5, claimLimit: 100 }));

		const perShop = SPACING_MS > 0 ? Math.min(CONCURRENCY / (LATENCY_MS / 1000), 1000 / SPACING_MS) : CONCURRENCY / (LATENCY_MS / 1000);
		const ceiling = created.length * perShop;
		console.log(
			`\n${N} listings on ${created.length} shops; latency ${LATENCY_MS} ms, max_concurrency ${CONCURRENCY}, min_spacing ${SPACING_MS} ms, ${WORKERS} worker(s)\n` +
				`ceiling: ${created.length} shops x ${perShop.toFixed(1)} req/s = ${ceiling.toFixed(0)} listings/s (robots.txt adds one request per shop)\n`
		);
		for (const pass of [1, 2]) {
			const before = await rowCounts(main.db, shopIds);
			const t0 = performance.now();
			const results: RunSummary[] = await Promise.all(pollers.map((p) => p.drain({ budgetMs: 10 * 60_000 })));
			const secs = (performance.now() - t0) / 1000;
			const after = await rowCounts(main.db, shopIds);
			const polled = results.reduce((n, r) => n + r.polled, 0);
			const outcomes: Record<string, number> = {};
			for (const r of results) for (const [k, v] of Object.entries(r.byOutcome)) outcomes[k] = (outcomes[k] ?? 0) + (v ?? 0);
			const rate = polled / secs;
			console.log(
				`pass ${pass} (${pass === 1 ? 'first reads: every listing is new' : 'nothing changed: conditional requests'}): ${polled} polls in ${secs.toFixed(2)} s = ${rate.toFixed(0)} listings/s ` +
					`(${((rate / ceiling) * 100).toFixed(0)} % of the ceiling); outcomes ${JSON.stringify(outcomes)}\n` +
					`   rows stored per poll: ${((after.obs - before.obs) / polled).toFixed(3)} observations, ${((after.ev - before.ev) / polled).toFixed(3)} stock events, ` +
					`${after.pc - before.pc} new poll_count rows in all (per shop, day and outcome; later polls update them)`
			);
			// Make everything due again for the second pass.
			t += 61 * 60_000;
		}
		for (const p of pools) await p.sql.end({ timeout: 5 });
		if (!cluster) {
			// Someone else's database: take the bench rows out again.
			const benchShopIds = (await main.db.select({ id: shops.id }).from(shops).where(like(shops.slug, `${BENCH_PREFIX}%`))).map((s) => s.id);
			await main.db.delete(listings).where(inArray(listings.shopId, benchShopIds));
			await main.db.delete(shops).where(inArray(shops.id, benchShopIds));
			if (paused.length) await main.db.update(listings).set({ active: true }).where(inArray(listings.id, paused.map((l) => l.id)));
		}
	} finally {
		await main.sql.end({ timeout: 5 });
		await fake.close();
		if (cluster) stopCluster(cluster);
	}
}

main().catch((err) => {
	console.error(err);
	process.exit(1);
});
