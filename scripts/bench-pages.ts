/**
 * `npm run bench:pages`: how fast the public guide answers with a large catalogue.
 *
 * Loads a generated catalogue (2,000 converters, 20,000 listings, a year of price and stock
 * history) into a scratch database `sg_bench_pages` on the test cluster, builds the app into
 * .data/bench/build, runs it on loopback, and measures with autocannon (32 connections, one
 * run per URL) through scripts/serve.mjs: requests per second and p50/p99 latency for /converters,
 * a converter page and /api/v1/converters, each as a ratio to the same server answering
 * /robots.txt (a static file) in the same run (the mean of the static runs just before and just
 * after that page's), once with the page cache warm and once with it off
 * (PAGE_CACHE=off); the first request after an invalidation (a real price change); bytes on the
 * wire (brotli or gzip); and the JavaScript each page loads before any section is opened.
 * Each URL, the static file's included, first gets BENCH_WARMUP seconds of the same load that
 * is not counted: a server in service has been running for a while, and V8 goes on optimizing the
 * hot code for the first half-minute or so of load (measured on the converter page with cache
 * off: 4.2 s of optimizing compiler time in the first 8 s, 0.5 s in the fourth 8 s; CPU per
 * request 14.0 -> 9.3 ms after 20 s of warm-up).
 * Lines for scripts: `<url> rps x<ratio>[ cache off] p99 <ms> ms`.
 *
 * Options: BENCH_CACHE (on|off; both when unset), BENCH_CONVERTERS (2000), BENCH_LISTINGS_PER (10),
 * BENCH_SECONDS (10), BENCH_WARMUP (10, seconds per URL), BENCH_PORT (4490 + SG_PORT_OFFSET), BENCH_SKIP_BUILD=1 to reuse
 * .data/bench/build, BENCH_SKIP_LOAD=1 to reuse the loaded database.
 */
import { spawn, spawnSync } from 'node:child_process';
import http from 'node:http';
import { existsSync } from 'node:fs';
import { resolve } from 'node:path';
import { gzipSync } from 'node:zlib';
import postgres from 'postgres';
import autocannon from 'autocannon';
import { applyMigrations } from '../src/lib/server/db/migrate';
import { loadBenchCatalogue } from './lib/bench-catalogue';
import { createDb } from '../src/lib/server/db/client';
import { refreshShopRecords } from '../src/lib/server/queries/shops';
import { refreshDirtyCards } from '../src/lib/server/queries/read-model';
// @ts-expect-error plain ES module without types
import { profile, ROOT } from './lib/profiles.mjs';
// @ts-expect-error plain ES module without types
import { ensureChromium, startCluster, stopCluster } from './lib/bootstrap.mjs';

const CONVERTERS = Number(process.env.BENCH_CONVERTERS || 2000);
const PER = Number(process.env.BENCH_LISTINGS_PER || 10);
const SECONDS = Number(process.env.BENCH_SECONDS || 10);
const WARMUP = Number(process.env.BENCH_WARMUP ?? 10);
// SG_PORT_OFFSET moves the app port like every other port (the cluster moves with profile()).
const PORT = Number(process.env.BENCH_PORT || 4490 + Number(process.env.SG_PORT_OFFSET || 0));
const NAME = 'sg_bench_pages';

const p = profile('test');
const adminUrl: string = p.adminUrl;
const url = (() => {
	const u = new URL(adminUrl);
	u.pathname = `/${NAME}`;
	return u.toString();
})();

/**
 * Vacuum and analyze the loaded database, as autovacuum does soon after on a database in service:
 * a table without a current visibility map has no cheap index-only scans (counting a region's cards
 * read the whole table), so a run right after the load would measure a state no server stays in.
 */
async function settle() {
	const sql = postgres(url, { max: 1, onnotice: () => {} });
	try {
		await sql`vacuum analyze`;
	} finally {
		await sql.end();
	}
}

async function load() {
	const admin = postgres(adminUrl, { max: 1, onnotice: () => {} });
	if (process.env.BENCH_SKIP_LOAD) {
		const [row] = await admin`select 1 from pg_database where datname = ${NAME}`;
		if (row) {
			await admin.end();
			await applyMigrations(url);
			const app = createDb(url, { max: 1 });
			await refreshDirtyCards(app.db); // an interrupted load may have left cards to build
			await app.sql.end();
			await settle();
			return;
		}
	}
	await admin.unsafe(`drop database if exists ${NAME} with (force)`);
	await admin.unsafe(`create database ${NAME}`);
	await admin.end();
	await applyMigrations(url);
	const sql = postgres(url, { max: 4, onnotice: () => {} });
	const t0 = Date.now();
	try {
		await loadBenchCatalogue(sql, { converters: CONVERTERS, per: PER });
		// what the jobs process keeps current: each shop's record line for the listing rows; and the
		// cards, which the writers build in service (left to the first request, they were written
		// after the vacuum below and measured with no visibility map)
		const app = createDb(url, { max: 1 });
		await refreshShopRecords(app.db);
		await refreshDirtyCards(app.db);
		await app.sql.end();
		await settle();
		const [counts] =
			await sql`select (select count(*)::int from converter) converters, (select count(*)::int from listing) listings, (select count(*)::int from observation) observations, (select count(*)::int from stock_event) restocks`;
		console.log(`loaded ${JSON.stringify(counts)} in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
	} finally {
		await sql.end();
	}
}

function build(out: string) {
	if (process.env.BENCH_SKIP_BUILD && existsSync(resolve(out, 'index.js'))) return;
	console.log('building the app…');
	const r = spawnSync('npm', ['run', 'build', '--silent'], {
		cwd: ROOT,
		env: { ...process.env, SG_BUILD_DIR: out },
		stdio: ['ignore', 'ignore', 'inherit']
	});
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

function cannon(target: string, seconds = SECONDS): Promise<Result> {
	return new Promise((resolveRun, reject) => {
		autocannon(
			// Every run, the static file's included, sends what a browser sends: compressed answers welcome.
			{
				url: target,
				connections: 32,
				duration: seconds,
				pipelining: 1,
				timeout: 30,
				headers: { 'accept-encoding': 'br, gzip' }
			},
			(err: Error | null, res: autocannon.Result) => {
				if (err) return reject(err);
				resolveRun({
					rps: res.requests.average,
					p50: res.latency.p50,
					p99: res.latency.p99,
					errors: res.errors + res.non2xx
				});
			}
		);
	});
}

/**
 * gzip bytes of the JavaScript a page really loads: the page is opened in Chromium and every
 * script response counted (entry, route nodes and their imports, plus anything loaded on demand
 * before the network goes quiet).
 */
async function shippedJs(base: string, path: string) {
	const { chromium } = await import('playwright-core');
	const browser = await chromium.launch({
		executablePath: '/usr/bin/chromium',
		args: ['--headless', '--no-sandbox', '--disable-gpu']
	});
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

/** Bytes on the wire for one URL with `Accept-Encoding: br, gzip` (Node's fetch would decompress). */
function wireBytes(target: string): Promise<{ bytes: number; encoding: string }> {
	return new Promise((ok, fail) => {
		http
			.get(target, { headers: { 'Accept-Encoding': 'br, gzip' } }, (res) => {
				let bytes = 0;
				res.on('data', (c: Buffer) => (bytes += c.length));
				res.on('end', () => ok({ bytes, encoding: String(res.headers['content-encoding'] ?? 'identity') }));
			})
			.on('error', fail);
	});
}

function startApp(out: string, port: number, cache: boolean) {
	const origin = `http://127.0.0.1:${port}`;
	const child = spawn(process.execPath, [resolve(ROOT, 'scripts/serve.mjs'), out], {
		cwd: ROOT,
		env: {
			...process.env,
			DATABASE_URL: url,
			HOST: '127.0.0.1',
			PORT: String(port),
			ORIGIN: origin,
			AUTH_SECRET: 'bench-secret-not-for-production-0123456789',
			NODE_ENV: 'production',
			PAGE_CACHE: cache ? 'on' : 'off'
		},
		stdio: ['ignore', 'ignore', 'inherit']
	});
	return { origin, child };
}

const TARGETS = [
	['/converters/bench-box-42', '/converters/bench-box-42'],
	['/converters', '/converters?region=eu'],
	['/api/v1/converters', '/api/v1/converters?region=eu']
] as const;

async function measure(origin: string, cache: boolean) {
	const tag = cache ? '' : ' cache off';
	const results: Record<string, Result> = {};
	for (const [, path] of TARGETS) await fetch(origin + path); // the first read builds the cards
	if (WARMUP > 0) {
		for (const path of ['/robots.txt', ...TARGETS.map(([, p]) => p)]) {
			await cannon(origin + path, WARMUP);
			await drain(origin);
		}
	}
	// Each page runs between two runs of the static file, and its ratio is to their mean: on a shared
	// machine the speed drifts within a minute, and a page measured half a minute after a single
	// static run could be compared with another machine state.
	const statics = [await cannon(`${origin}/robots.txt`)];
	await drain(origin);
	const ceiling: Record<string, number> = {};
	for (const [label, path] of TARGETS) {
		results[label] = await cannon(origin + path);
		await drain(origin);
		statics.push(await cannon(`${origin}/robots.txt`));
		await drain(origin);
		ceiling[label] = (statics.at(-2)!.rps + statics.at(-1)!.rps) / 2;
	}
	const line = (label: string, r: Result) =>
		console.log(
			`${(label + tag).padEnd(36)} ${r.rps.toFixed(1).padStart(9)} req/s   p50 ${String(r.p50).padStart(5)} ms   p99 ${String(r.p99).padStart(5)} ms${r.errors ? `   (${r.errors} errors/non-2xx)` : ''}`
		);
	statics.forEach((r, i) => line(`static /robots.txt (${i + 1})`, r));
	for (const [label] of TARGETS) line(label, results[label]);
	// One line per figure, for scripts: `<url> rps x<ratio>` (and p99 in ms).
	for (const [label] of TARGETS) {
		const r = results[label];
		console.log(`${label} rps x${(r.rps / ceiling[label]).toFixed(3)}${tag} p99 ${r.p99} ms`);
	}
}

/** Time of the first request to each URL after a real change (a listing's price) invalidated every cache. */
async function afterInvalidation(origin: string) {
	const sql = postgres(url, { max: 1, onnotice: () => {} });
	try {
		for (const [label, path] of TARGETS) {
			await fetch(origin + path);
			await sql`
				update listing_state set current_price_minor = current_price_minor + 1
				where listing_id = (select l.id from listing l join converter c on c.id = l.converter_id where c.slug = 'bench-box-42' order by l.id limit 1)`;
			await new Promise((r) => setTimeout(r, 500)); // the NOTIFY reaches the app
			const t = performance.now();
			const res = await fetch(origin + path);
			await res.arrayBuffer();
			console.log(
				`${label} first request after an invalidation ${Math.round(performance.now() - t)} ms (${res.headers.get('x-page-cache')})`
			);
		}
	} finally {
		await sql.end();
	}
}

async function main() {
	ensureChromium(); // counts the JavaScript a page loads in Debian's Chromium
	const started = await startCluster(p, { fast: true });
	const out = resolve(ROOT, '.data', 'bench', 'build');
	const modes = process.env.BENCH_CACHE === 'off' ? [false] : process.env.BENCH_CACHE === 'on' ? [true] : [true, false];
	let app: ReturnType<typeof startApp> | null = null;
	try {
		await load();
		build(out);
		for (const cache of modes) {
			app = startApp(out, PORT, cache);
			await waitFor(`${app.origin}/robots.txt`);
			await measure(app.origin, cache);
			if (cache) {
				await afterInvalidation(app.origin);
				for (const [label, path] of TARGETS) {
					const w = await wireBytes(app.origin + path);
					console.log(`${label} bytes on the wire ${w.bytes} (${w.encoding})`);
					// V8 keeps a string with any character past U+00FF at two bytes per character, and a
					// rendered page past 128 KiB in its large-object space: both cost every request.
					const text = await (await fetch(app.origin + path)).text();
					const wide = [...new Set([...text].filter((c) => c.codePointAt(0)! > 0xff))];
					console.log(
						`${label} ${text.length} characters, ${wide.length ? `${2 * text.length} bytes in V8 (outside Latin-1: ${wide.join(' ')})` : `${text.length} bytes in V8 (Latin-1)`}`
					);
				}
				const js = await shippedJs(app.origin, '/converters');
				console.log(
					`\nJavaScript shipped to /converters: ${js.files} files, ${js.raw} bytes, ${js.gz} bytes gzip; chart code included: ${js.chart ? 'yes' : 'no'}`
				);
				const jsDetail = await shippedJs(app.origin, '/converters/bench-box-42');
				console.log(
					`JavaScript on a converter page before any section is opened: ${jsDetail.files} files, ${jsDetail.gz} bytes gzip; chart code included: ${jsDetail.chart ? 'yes' : 'no'}\n`
				);
			}
			app.child.kill('SIGTERM');
			await new Promise((r) => app!.child.once('exit', r));
			app = null;
		}
	} finally {
		app?.child.kill('SIGTERM');
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
