/**
 * `npm run bench:pages`: how fast the public guide answers with a large catalogue.
 *
 * Loads a generated catalogue (2,000 converters, 20,000 listings, a year of price and stock
 * history) into a scratch database `sg_bench_pages` on the test cluster, builds the app into
 * .data/bench/build, runs it on loopback, and measures with autocannon (32 connections, one
 * run per URL): requests per second and p50/p99 latency for /converters, a converter page and
 * /api/v1/converters, each also as a ratio to the same server answering /robots.txt (a static
 * file). Also prints the JavaScript the catalogue page ships (gzip bytes).
 *
 * Options: BENCH_CONVERTERS (2000), BENCH_LISTINGS_PER (10), BENCH_SECONDS (10), BENCH_PORT (4490),
 * BENCH_SKIP_BUILD=1 to reuse an existing .data/bench/build.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { resolve } from 'node:path';
import { gzipSync } from 'node:zlib';
import postgres from 'postgres';
import autocannon from 'autocannon';
import { applyMigrations } from '../src/lib/server/db/migrate';
import { analyzeLevels } from '../src/lib/levels/index';
import { CHIPS, DEMO_RATES_PER_EUR, SHOPS, demoReadings } from '../src/lib/demo/scenario';
// @ts-expect-error plain ES module without types
import { profile, ROOT } from './lib/profiles.mjs';
// @ts-expect-error plain ES module without types
import { startCluster, stopCluster } from './lib/bootstrap.mjs';

const CONVERTERS = Number(process.env.BENCH_CONVERTERS || 2000);
const PER = Number(process.env.BENCH_LISTINGS_PER || 10);
const SECONDS = Number(process.env.BENCH_SECONDS || 10);
const PORT = Number(process.env.BENCH_PORT || 4490);
const NAME = 'sg_bench_pages';

const p = profile('test');
const adminUrl: string = p.adminUrl;
const url = (() => {
	const u = new URL(adminUrl);
	u.pathname = `/${NAME}`;
	return u.toString();
})();

async function load() {
	const admin = postgres(adminUrl, { max: 1, onnotice: () => {} });
	await admin.unsafe(`drop database if exists ${NAME} with (force)`);
	await admin.unsafe(`create database ${NAME}`);
	await admin.end();
	await applyMigrations(url);
	const sql = postgres(url, { max: 4, onnotice: () => {} });
	const t0 = Date.now();
	try {
		// Chips and one stored report per chip (the engine's output for the demo readings).
		for (const c of CHIPS) await sql`insert into chip (slug, name, maker, notes) values (${c.slug}, ${c.name}, ${c.maker}, ${c.notes})`;
		const chipRows = await sql<{ id: number; slug: string }[]>`select id, slug from chip`;
		const chipId = new Map(chipRows.map((r) => [r.slug, r.id]));
		const graded = CHIPS.map((c) => {
			const readings = demoReadings(c, 0);
			return { chip: c.slug, readings, report: analyzeLevels({ steps: readings, fullScaleMv: 700 }) };
		});
		const shopRows = [];
		for (const s of SHOPS) {
			const [row] = await sql<{ id: number }[]>`
				insert into shop (slug, name, region, currency, ships_to, base_url, default_format)
				values (${s.slug}, ${s.name}, ${s.region}, ${s.currency}, ${sql.array(s.shipsTo)}::region[], ${'http://127.0.0.1:9'}, ${s.format})
				returning id`;
			shopRows.push({ id: row.id, currency: s.currency, format: s.format });
		}
		for (const [quote, rate] of Object.entries(DEMO_RATES_PER_EUR))
			await sql`insert into exchange_rate (base, quote, day, rate, source) values ('EUR', ${quote}, current_date - 1, ${String(rate)}, 'bench')`;

		// Converters, revisions (1 or 2), one accepted bench run per revision with readings.
		const powers = ['usb-bus', 'usb-adapter', 'barrel'];
		for (let start = 0; start < CONVERTERS; start += 500) {
			const batch = Array.from({ length: Math.min(500, CONVERTERS - start) }, (_, k) => start + k);
			const convRows = await sql<{ id: number }[]>`
				insert into converter ${sql(
					batch.map((i) => ({
						slug: `bench-box-${i}`,
						brand: `Benchbrand ${i % 97}`,
						model: `Model ${i}`,
						summary: 'Generated for the page benchmark.',
						has_audio_out: i % 2 === 0,
						power: powers[i % 3],
						last_reviewed_at: new Date()
					}))
				)} returning id`;
			const revs: Array<Record<string, unknown>> = [];
			convRows.forEach((c, k) => {
				const i = batch[k];
				const n = i % 3 === 0 ? 2 : 1;
				for (let r = 0; r < n; r++) {
					const g = graded[(i + r) % graded.length];
					revs.push({ converter_id: c.id, code: String.fromCharCode(65 + r), chip_id: chipId.get(g.chip), band: g.report.band, score: g.report.score, score_min: g.report.score, score_max: g.report.score, run_count: 1, rubric_version: g.report.rubricVersion, graded_at: new Date() });
				}
			});
			const revRows = await sql<{ id: number; chip_id: number }[]>`insert into revision ${sql(revs)} returning id, chip_id`;
			const runs = revRows.map((r) => {
				const g = graded.find((x) => chipId.get(x.chip) === r.chip_id)!;
				return { revision_id: r.id, status: 'accepted', measured_by: 'Bench generator', measured_on: '2026-01-15', test_source: 'generated', instrument: 'generated', report: sql.json(g.report as never), band: g.report.band, score: g.report.score, rubric_version: g.report.rubricVersion };
			});
			const runRows = await sql<{ id: number; revision_id: number }[]>`insert into bench_run ${sql(runs as never)} returning id, revision_id`;
			const readings = runRows.flatMap((run) => {
				const chip = revRows.find((r) => r.id === run.revision_id)!.chip_id;
				const g = graded.find((x) => chipId.get(x.chip) === chip)!;
				return g.readings.map((s) => ({ bench_run_id: run.id, ire: s.ire, r_mv: s.r, g_mv: s.g, b_mv: s.b }));
			});
			await sql`insert into bench_reading ${sql(readings)}`;
		}

		// Listings: PER per converter across the shops; state and a year of change points in SQL.
		await sql`
			insert into listing (shop_id, converter_id, url, format, poll_interval_minutes)
			select s.id, c.id, 'http://127.0.0.1:9/' || c.slug || '/' || k, s.default_format, 60
			from converter c
			cross join generate_series(0, ${PER - 1}) k
			join lateral (select id, default_format from shop order by id offset (k % ${SHOPS.length}) limit 1) s on true`;
		// About one change point every 9 days for a year: price wanders, stock flips.
		await sql`
			insert into observation (listing_id, observed_at, price_minor, currency, stock)
			select l.id, now() - interval '365 days' + (d * interval '9 days') + ((l.id % 24) * interval '1 hour'),
			       (case when s.currency = 'JPY' then 2000 else 1200 end) + ((l.id * 37 + d * 11) % 900),
			       s.currency,
			       (case when (l.id + d) % 3 = 0 then 'out_of_stock' else 'in_stock' end)::stock_state
			from listing l join shop s on s.id = l.shop_id
			cross join generate_series(0, 40) d`;
		await sql`
			insert into listing_state (listing_id, next_poll_at, current_price_minor, current_currency, current_stock, current_since, last_checked_at, last_success_at)
			select distinct on (o.listing_id) o.listing_id, now() + interval '1 day', o.price_minor, o.currency, o.stock, o.observed_at, now(), now()
			from observation o order by o.listing_id, o.observed_at desc`;
		await sql`
			insert into stock_event (listing_id, observation_id, kind, at, price_minor, currency, previous_stock)
			select listing_id, id, 'restock', observed_at, price_minor, currency, 'out_of_stock'
			from (select o.*, lag(o.stock) over (partition by o.listing_id order by o.observed_at) as prev from observation o) x
			where stock = 'in_stock' and prev = 'out_of_stock'`;
		await sql`analyze`;
		const [counts] = await sql`select (select count(*)::int from converter) converters, (select count(*)::int from listing) listings, (select count(*)::int from observation) observations, (select count(*)::int from stock_event) restocks`;
		console.log(`loaded ${JSON.stringify(counts)} in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
	} finally {
		await sql.end();
	}
}

function build(out: string) {
	if (process.env.BENCH_SKIP_BUILD && existsSync(resolve(out, 'index.js'))) return;
	console.log('building the app…');
	const r = spawnSync('npm', ['run', 'build', '--silent'], { cwd: ROOT, env: { ...process.env, SG_BUILD_DIR: out }, stdio: ['ignore', 'ignore', 'inherit'] });
	if (r.status !== 0) throw new Error('build failed');
}

async function waitFor(target: string, ms = 30_000) {
	const end = Date.now() + ms;
	while (Date.now() < end) {
		try {
			if ((await fetch(target)).ok) return;
		} catch {
			/* not up yet */
		}
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`${target} did not answer`);
}

/** Wait until the server has worked off requests still queued from the last run. */
async function drain(origin: string) {
	for (let i = 0; i < 120; i++) {
		const t = Date.now();
		await fetch(`${origin}/robots.txt`);
		if (Date.now() - t < 50) return;
		await new Promise((r) => setTimeout(r, 500));
	}
}

interface Result {
	rps: number;
	p50: number;
	p99: number;
	errors: number;
}

function cannon(target: string): Promise<Result> {
	return new Promise((resolveRun, reject) => {
		autocannon({ url: target, connections: 32, duration: SECONDS, pipelining: 1, timeout: 30 }, (err: Error | null, res: autocannon.Result) => {
			if (err) return reject(err);
			resolveRun({ rps: res.requests.average, p50: res.latency.p50, p99: res.latency.p99, errors: res.errors + res.non2xx });
		});
	});
}

/**
 * gzip bytes of the JavaScript a page really loads: the page is opened in Chromium and every
 * script response counted (entry, route nodes and their imports, plus anything loaded on demand
 * before the network goes quiet).
 */
async function shippedJs(base: string, path: string) {
	const { chromium } = await import('playwright-core');
	const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu'] });
	try {
		const page = await browser.newPage();
		const bodies: Promise<Buffer>[] = [];
		page.on('response', (r) => {
			if (r.request().resourceType() === 'script') bodies.push(r.body().catch(() => Buffer.alloc(0)));
		});
		await page.goto(base + path, { waitUntil: 'networkidle' });
		const all = await Promise.all(bodies);
		return {
			files: all.length,
			raw: all.reduce((n, b) => n + b.length, 0),
			gz: all.reduce((n, b) => n + gzipSync(b, { level: 9 }).length, 0),
			chart: all.some((b) => b.includes('Failed to create chart'))
		};
	} finally {
		await browser.close();
	}
}

async function main() {
	const started = await startCluster(p, { fast: true });
	const out = resolve(ROOT, '.data', 'bench', 'build');
	let app: ReturnType<typeof spawn> | null = null;
	try {
		await load();
		build(out);
		const origin = `http://127.0.0.1:${PORT}`;
		app = spawn(process.execPath, [out], {
			cwd: ROOT,
			env: { ...process.env, DATABASE_URL: url, HOST: '127.0.0.1', PORT: String(PORT), ORIGIN: origin, AUTH_SECRET: 'bench-secret-not-for-production-0123456789', NODE_ENV: 'production' },
			stdio: ['ignore', 'ignore', 'inherit']
		});
		await waitFor(`${origin}/robots.txt`);
		const targets = [
			['static /robots.txt', '/robots.txt'],
			['/converters/bench-box-42', '/converters/bench-box-42'],
			['/converters', '/converters?region=eu'],
			['/api/v1/converters', '/api/v1/converters?region=eu']
		] as const;
		for (const [, path] of targets) await fetch(origin + path); // warm up
		const results: Record<string, Result> = {};
		for (const [label, path] of targets) {
			results[label] = await cannon(origin + path);
			await drain(origin);
			const r = results[label];
			console.log(`${label.padEnd(28)} ${r.rps.toFixed(1).padStart(9)} req/s   p50 ${String(r.p50).padStart(5)} ms   p99 ${String(r.p99).padStart(5)} ms${r.errors ? `   (${r.errors} errors/non-2xx)` : ''}`);
		}
		const base = results['static /robots.txt'];
		console.log('\nratio to the static file (rps, p50, p99):');
		for (const [label] of targets.slice(1)) {
			const r = results[label];
			console.log(`  ${label.padEnd(28)} rps ×${(r.rps / base.rps).toFixed(3)}   p50 ×${(r.p50 / Math.max(base.p50, 1)).toFixed(1)}   p99 ×${(r.p99 / Math.max(base.p99, 1)).toFixed(1)}`);
		}
		const js = await shippedJs(origin, '/converters');
		console.log(`\nJavaScript shipped to /converters: ${js.files} files, ${js.raw} bytes, ${js.gz} bytes gzip; chart code included: ${js.chart ? 'yes' : 'no'}`);
		const jsDetail = await shippedJs(origin, '/converters/bench-box-42');
		console.log(`JavaScript on a converter page, charts included (loaded on demand): ${jsDetail.files} files, ${jsDetail.gz} bytes gzip; chart code included: ${jsDetail.chart ? 'yes' : 'no'}`);
	} finally {
		app?.kill('SIGTERM');
		if (started) stopCluster(p);
	}
}

main().then(
	() => process.exit(0), // the migration pool and child pipes would keep the loop alive
	(err) => {
		console.error(err);
		process.exit(1);
	}
);
