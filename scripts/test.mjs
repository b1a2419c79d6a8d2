#!/usr/bin/env node
// `npm test`: bootstrap like `npm start`, then vitest (unit + integration against a real
// PostgreSQL, fake SMTP and fake shops) and Playwright against the built app.
// Extra arguments pick parts: `npm test -- lint` (Prettier + ESLint), `npm test -- check`
// (svelte-check), `npm test -- unit` (vitest) or `npm test -- e2e` (Playwright). Any other
// argument is a file filter handed to vitest or Playwright: `npm test -- e2e tests/e2e/guide.spec.ts`.
import { mkdirSync, readFileSync, rmSync } from 'node:fs';
import { resolve } from 'node:path';
import { appEnv, profile, ROOT } from './lib/profiles.mjs';
import { log, portIsFree, run, startService, stopAll, waitForHttp } from './lib/run.mjs';
import {
	ensureChromium,
	ensureDatabase,
	ensureJava,
	ensureNodeModules,
	startCluster,
	stopCluster
} from './lib/bootstrap.mjs';

// A plain `npm test` runs `npm run lint` (Prettier, then ESLint) first; `npm test -- lint` runs it alone.
const LINT_IN_FULL_RUN = true;

const PARTS = ['lint', 'check', 'unit', 'e2e'];
const parts = process.argv.slice(2).filter((a) => PARTS.includes(a));
const filters = process.argv.slice(2).filter((a) => !PARTS.includes(a));
const want = (part) => (parts.length === 0 ? part !== 'lint' || LINT_IN_FULL_RUN : parts.includes(part));

const p = profile('test');
const e2e = {
	...p,
	database: 'scopegrade_e2e',
	databaseUrl: p.databaseUrl.replace(/\/scopegrade_test$/, '/scopegrade_e2e')
};
const artifacts = resolve(ROOT, 'tests', 'artifacts');
const children = [];
let failed = false;
/** Steps that failed without counting tests (lint, svelte-check, a runner that left no report). */
const failedSteps = [];
// Stop only a cluster this run started, never one another run is using.
let clusterStarted = false;
const totals = { passed: 0, failed: 0, skipped: 0 };

function readJson(file) {
	try {
		return JSON.parse(readFileSync(file, 'utf8'));
	} catch {
		return null;
	}
}

async function main() {
	// Prettier and ESLint come from node_modules: a clean checkout installs them first.
	ensureNodeModules();
	if (want('lint')) {
		log('lint: Prettier (formatting) and ESLint');
		try {
			run('npm', ['run', 'lint', '--silent'], { cwd: ROOT });
		} catch {
			failed = true;
			failedSteps.push('lint');
		}
		// Lint alone needs no database or services.
		if (parts.length === 1) return;
	}
	for (const port of [p.appPort, p.inboxPort, p.smtpPort, p.shopsPort, p.s3Port]) {
		if (!(await portIsFree(port))) throw new Error(`port ${port} is in use: is another test run going on?`);
	}
	if (want('e2e')) {
		ensureChromium();
		ensureJava();
	}
	clusterStarted = await startCluster(p, { fast: true });
	ensureDatabase(p, { fresh: true });
	ensureDatabase(e2e, { fresh: true });
	rmSync(artifacts, { recursive: true, force: true });
	mkdirSync(artifacts, { recursive: true });

	const env = {
		...process.env,
		...appEnv(p, 'test-secret-not-for-production-0123456789'),
		SG_BUILD_DIR: resolve(p.dataDir, 'build'),
		TEST_DATABASE_URL: p.databaseUrl,
		TEST_ADMIN_DATABASE_URL: p.adminUrl,
		// Every journey signs in from 127.0.0.1: lift the per-client limit, keep the per-address one.
		SIGNIN_LIMIT_PER_CLIENT: '1000'
	};
	const tsx = resolve(ROOT, 'node_modules/.bin/tsx');
	run(tsx, ['scripts/migrate.ts'], { cwd: ROOT, env });

	const mail = startService('mail', tsx, ['fixtures/mail/server.ts'], { cwd: ROOT, env });
	const shops = startService('shops', tsx, ['fixtures/shops/server.ts'], { cwd: ROOT, env });
	// Fresh fake S3 folder per run, like the fresh databases.
	rmSync(resolve(p.dataDir, 's3'), { recursive: true, force: true });
	const s3 = startService('s3', tsx, ['fixtures/s3/server.ts'], { cwd: ROOT, env });
	children.push(mail, shops, s3);
	await waitForHttp(`http://127.0.0.1:${p.inboxPort}/api/health`, 30_000, mail);
	await waitForHttp(`http://127.0.0.1:${p.s3Port}/`, 30_000, s3);

	if (want('check')) {
		log('svelte-check: types and Svelte diagnostics');
		try {
			run('npm', ['run', 'check', '--silent'], { cwd: ROOT, env });
		} catch {
			failed = true;
			failedSteps.push('svelte-check');
		}
	}

	if (want('unit')) {
		log('vitest: unit and integration tests');
		const out = resolve(artifacts, 'vitest.json');
		try {
			run(
				resolve(ROOT, 'node_modules/.bin/vitest'),
				['run', '--reporter=default', '--reporter=json', `--outputFile.json=${out}`, ...filters],
				{ cwd: ROOT, env }
			);
		} catch {
			failed = true;
		}
		const r = readJson(out);
		if (r) {
			totals.passed += r.numPassedTests ?? 0;
			totals.failed += r.numFailedTests ?? 0;
			totals.skipped += (r.numPendingTests ?? 0) + (r.numTodoTests ?? 0);
		} else {
			failed = true;
			failedSteps.push('vitest (no report)');
		}
	}

	if (want('e2e')) {
		log('building the app for the end-to-end tests');
		run('npm', ['run', 'build', '--silent'], { cwd: ROOT, env });
		const e2eEnv = { ...env, DATABASE_URL: e2e.databaseUrl };
		run(tsx, ['scripts/migrate.ts'], { cwd: ROOT, env: e2eEnv });
		run(tsx, ['scripts/seed.ts'], { cwd: ROOT, env: e2eEnv });
		// The jobs process (poller, alert sender, digest) for journeys that need it; the sender runs every 2 s.
		children.push(
			startService('jobs', tsx, ['jobs/index.ts'], { cwd: ROOT, env: { ...e2eEnv, SENDER_CRON: '*/2 * * * * *' } })
		);
		log("playwright: end-to-end tests in Debian's Chromium");
		const out = resolve(artifacts, 'playwright.json');
		try {
			run(resolve(ROOT, 'node_modules/.bin/playwright'), ['test', ...filters], {
				cwd: ROOT,
				env: { ...e2eEnv, PLAYWRIGHT_JSON_OUTPUT_NAME: out }
			});
		} catch {
			failed = true;
		}
		const r = readJson(out);
		if (r?.stats) {
			totals.passed += r.stats.expected ?? 0;
			totals.failed += (r.stats.unexpected ?? 0) + (r.stats.flaky ?? 0);
			totals.skipped += r.stats.skipped ?? 0;
		} else {
			failed = true;
			failedSteps.push('playwright (no report)');
		}
	}
}

try {
	await main();
} catch (err) {
	console.error(`\nnpm test could not run: ${err.message}`);
	failed = true;
	failedSteps.push('setup');
} finally {
	await stopAll(children);
	if (clusterStarted) stopCluster(p);
}
if (totals.failed > 0) failed = true;
console.log(
	`\nScopegrade tests: ${totals.passed} passed, ${totals.failed} failed, ${totals.skipped} skipped` +
		(failedSteps.length ? `; also failed: ${failedSteps.join(', ')}` : '')
);
process.exit(failed ? 1 : 0);
