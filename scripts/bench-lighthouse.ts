/**
 * `npm run bench:lighthouse`: Lighthouse (mobile defaults: simulated slow 4G and 4x CPU slowdown)
 * in Debian's Chromium on the demo catalogue and a demo converter page, served by
 * scripts/serve.mjs from a scratch database `sg_bench_lighthouse` (demo seed) on the test cluster.
 * Prints per page: performance, total blocking time, largest contentful paint, accessibility,
 * best practices and SEO, one figure per line (`<path> <figure> <value>`), against the targets
 * performance >= 90, TBT <= 200 ms, LCP <= 2.5 s, the other three 100.
 *
 * Each page is measured BENCH_RUNS times (5) and the median run reported, as Lighthouse's
 * documentation advises against run-to-run variance (lighthouse/core/lib/median-run.js).
 *
 * Options: BENCH_SKIP_BUILD=1 reuses .data/bench/build (shared with bench:pages),
 * BENCH_PORT (4491 + SG_PORT_OFFSET), CHROME_PATH (/usr/bin/chromium).
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { resolve } from 'node:path';
import postgres from 'postgres';
import lighthouse from 'lighthouse';
import { computeMedianRun } from 'lighthouse/core/lib/median-run.js';
import * as chromeLauncher from 'chrome-launcher';
import { applyMigrations } from '../src/lib/server/db/migrate';
import { createDb } from '../src/lib/server/db/client';
import { seedDemo } from '../src/lib/server/db/seed';
import { CONVERTERS } from '../src/lib/demo/scenario';
// @ts-expect-error plain ES module without types
import { profile, ROOT } from './lib/profiles.mjs';
// @ts-expect-error plain ES module without types
import { ensureChromium, startCluster, stopCluster } from './lib/bootstrap.mjs';

const PORT = Number(process.env.BENCH_PORT || 4491 + Number(process.env.SG_PORT_OFFSET || 0));
const NAME = 'sg_bench_lighthouse';
const RUNS = Math.max(1, Number(process.env.BENCH_RUNS || 5));
const CHROME = process.env.CHROME_PATH || '/usr/bin/chromium';
const p = profile('test');
const url = (() => {
	const u = new URL(p.adminUrl);
	u.pathname = `/${NAME}`;
	return u.toString();
})();

async function prepare() {
	const admin = postgres(p.adminUrl, { max: 1, onnotice: () => {} });
	await admin.unsafe(`drop database if exists ${NAME} with (force)`);
	await admin.unsafe(`create database ${NAME}`);
	await admin.end();
	await applyMigrations(url);
	const { db, sql } = createDb(url, { max: 2 });
	try {
		await seedDemo(db, { shopsPort: p.shopsPort });
	} finally {
		await sql.end();
	}
}

function build(out: string) {
	if (process.env.BENCH_SKIP_BUILD && existsSync(resolve(out, 'handler.js'))) return;
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

async function main() {
	if (!process.env.CHROME_PATH) ensureChromium();
	const started = await startCluster(p, { fast: true });
	const out = resolve(ROOT, '.data', 'bench', 'build');
	const origin = `http://127.0.0.1:${PORT}`;
	let app: ReturnType<typeof spawn> | null = null;
	let chrome: chromeLauncher.LaunchedChrome | null = null;
	try {
		await prepare();
		build(out);
		app = spawn(process.execPath, [resolve(ROOT, 'scripts/serve.mjs'), out], {
			cwd: ROOT,
			env: {
				...process.env,
				DATABASE_URL: url,
				HOST: '127.0.0.1',
				PORT: String(PORT),
				ORIGIN: origin,
				AUTH_SECRET: 'bench-secret-not-for-production-0123456789',
				NODE_ENV: 'production'
			},
			stdio: ['ignore', 'ignore', 'inherit']
		});
		await waitFor(`${origin}/robots.txt`);
		const slug = CONVERTERS.find((c) => c.slug === 'brisling-scanlet')?.slug ?? CONVERTERS[0].slug;
		const pages = ['/converters', `/converters/${slug}`];
		for (const path of pages) await fetch(origin + path); // warm the page cache and the cards
		chrome = await chromeLauncher.launch({
			chromePath: CHROME,
			chromeFlags: ['--headless=new', '--no-sandbox', '--disable-gpu', '--disable-dev-shm-usage']
		});
		for (const path of pages) {
			// Lighthouse's own advice for noisy machines: several runs, report the median one.
			const runs = [];
			for (let i = 0; i < RUNS; i++) {
				const result = await lighthouse(origin + path, { port: chrome.port, output: 'json', logLevel: 'error' });
				if (!result) throw new Error(`lighthouse gave no result for ${path}`);
				runs.push(result.lhr);
			}
			const tbts = runs.map((r) => Math.round(r.audits['total-blocking-time'].numericValue ?? 0)).sort((x, y) => x - y);
			console.log(
				`${path} median of ${RUNS} runs (Lighthouse computeMedianRun); total blocking time over the runs ${tbts.join(', ')} ms`
			);
			const { categories: c, audits: a } = computeMedianRun(runs);
			const score = (k: string) => Math.round((c[k]?.score ?? 0) * 100);
			console.log(`${path} performance ${score('performance')}`);
			console.log(`${path} total-blocking-time ${Math.round(a['total-blocking-time'].numericValue ?? 0)} ms`);
			console.log(
				`${path} largest-contentful-paint ${((a['largest-contentful-paint'].numericValue ?? 0) / 1000).toFixed(2)} s`
			);
			console.log(
				`${path} other metrics: first-contentful-paint ${((a['first-contentful-paint'].numericValue ?? 0) / 1000).toFixed(2)} s, speed-index ${((a['speed-index'].numericValue ?? 0) / 1000).toFixed(2)} s, cumulative-layout-shift ${(a['cumulative-layout-shift'].numericValue ?? 0).toFixed(3)}`
			);
			console.log(`${path} accessibility ${score('accessibility')}`);
			console.log(`${path} best-practices ${score('best-practices')}`);
			console.log(`${path} seo ${score('seo')}`);
			const failing = Object.values(a)
				.filter((x) => x.score !== null && x.score < 1 && x.scoreDisplayMode === 'binary')
				.map((x) => x.id);
			if (failing.length) console.log(`${path} failing audits: ${failing.join(', ')}`);
			// Where the main thread went (the blocking time is judged on it; a loaded machine inflates all of it).
			const work = (
				a['mainthread-work-breakdown']?.details as { items?: Array<{ groupLabel: string; duration: number }> }
			)?.items;
			if (work)
				console.log(
					`${path} main-thread ${work
						.slice(0, 4)
						.map((w) => `${w.groupLabel} ${Math.round(w.duration)} ms`)
						.join(', ')}`
				);
			// Which scripts cost the most main-thread time (evaluation and compile).
			const boot = (
				a['bootup-time']?.details as { items?: Array<{ url: string; scripting: number; scriptParseCompile: number }> }
			)?.items;
			if (boot)
				console.log(
					`${path} scripts ${boot
						.slice(0, 5)
						.map(
							(b) => `${b.url.replace(origin, '')} ${Math.round(b.scripting)}+${Math.round(b.scriptParseCompile)} ms`
						)
						.join(', ')}`
				);
		}
	} finally {
		await chrome?.kill();
		app?.kill('SIGTERM');
		if (started) stopCluster(p);
	}
}

main().then(
	() => process.exit(0),
	(err) => {
		console.error(err);
		process.exit(1);
	}
);
