#!/usr/bin/env node
// `npm start`: the whole product with demo data on this machine (see README).
import { existsSync, readFileSync, rmSync, statSync, writeFileSync, readdirSync } from 'node:fs';
import { resolve } from 'node:path';
import { appEnv, profile, ROOT } from './lib/profiles.mjs';
import { log, portIsFree, run, startService, stopAll, waitForHttp } from './lib/run.mjs';
import { authSecret, ensureDatabase, ensureNodeModules, startCluster, stopCluster } from './lib/bootstrap.mjs';

const p = profile('dev');
const pidFile = resolve(p.dataDir, 'start.pid');

function alreadyRunning() {
	if (!existsSync(pidFile)) return null;
	const pid = Number(readFileSync(pidFile, 'utf8'));
	try {
		process.kill(pid, 0);
		return pid;
	} catch {
		return null; // stale file from a crash
	}
}

/** Newest modification time under the given paths (to decide whether to rebuild). */
function newestMtime(paths) {
	let newest = 0;
	const walk = (path) => {
		if (!existsSync(path)) return;
		const st = statSync(path);
		if (st.isDirectory()) for (const e of readdirSync(path)) walk(resolve(path, e));
		else newest = Math.max(newest, st.mtimeMs);
	};
	paths.forEach((x) => walk(resolve(ROOT, x)));
	return newest;
}

const running = alreadyRunning();
if (running) {
	console.error(
		`Scopegrade is already running (process ${running}): app at ${p.origin}/, inbox at http://127.0.0.1:${p.inboxPort}/.\n` +
			'Stop it with Ctrl-C in the terminal where it runs, then start again.'
	);
	process.exit(1);
}
for (const [what, port] of [
	['app', p.appPort],
	['inbox', p.inboxPort],
	['SMTP', p.smtpPort],
	['fake shops', p.shopsPort],
	['fake S3', p.s3Port]
]) {
	if (!(await portIsFree(port))) {
		console.error(`Port ${port} (${what}) is already in use by another program. Free it and start again.`);
		process.exit(1);
	}
}

const children = [];
let stopping = false;
async function shutdown(code = 0) {
	if (stopping) return;
	stopping = true;
	log('stopping…');
	await stopAll(children);
	stopCluster(p);
	rmSync(pidFile, { force: true });
	log('stopped.');
	process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

try {
	ensureNodeModules();
	await startCluster(p);
	writeFileSync(pidFile, String(process.pid));
	ensureDatabase(p);
	const env = { ...process.env, ...appEnv(p, authSecret(p)) };
	const tsx = resolve(ROOT, 'node_modules/.bin/tsx');
	// Object storage first: the demo's teardown photos are stored while the scenario loads.
	const s3 = startService('s3', tsx, ['fixtures/s3/server.ts'], { cwd: ROOT, env });
	children.push(s3);
	await waitForHttp(`http://127.0.0.1:${p.s3Port}/`, 30_000, s3);
	log('applying migrations and loading the demo scenario…');
	run(tsx, ['scripts/migrate.ts'], { cwd: ROOT, env });
	run(tsx, ['scripts/seed.ts'], { cwd: ROOT, env });

	const sources = ['src', 'static', 'svelte.config.js', 'vite.config.ts', 'tailwind.config.ts', 'package-lock.json'];
	const stamp = resolve(ROOT, 'build', '.built-at');
	if (!existsSync(stamp) || newestMtime(sources) > statSync(stamp).mtimeMs) {
		log('building the app (vite build)…');
		run('npm', ['run', 'build', '--silent'], { cwd: ROOT, env });
		writeFileSync(stamp, new Date().toISOString());
	}

	const mail = startService('mail', tsx, ['fixtures/mail/server.ts'], { cwd: ROOT, env });
	const shops = startService('shops', tsx, ['fixtures/shops/server.ts'], { cwd: ROOT, env });
	children.push(mail, shops);
	await waitForHttp(`http://127.0.0.1:${p.inboxPort}/api/health`, 30_000, mail);
	const app = startService('app', process.execPath, ['scripts/serve.mjs', 'build'], { cwd: ROOT, env });
	const jobs = startService('jobs', tsx, ['jobs/index.ts'], { cwd: ROOT, env });
	children.push(app, jobs);
	await waitForHttp(`${p.origin}/`, 60_000, app);
	for (const c of children) {
		c.once('exit', (code) => {
			if (!stopping) {
				log(`${c.serviceName} exited (code ${code}); stopping everything.`);
				shutdown(1);
			}
		});
	}
	console.log(`
  Scopegrade is running (demo data, invented shops and brands):
    app          ${p.origin}/
    local inbox  http://127.0.0.1:${p.inboxPort}/   (sign-in links and alerts land here)
    fake S3      http://127.0.0.1:${p.s3Port}/   (uploads; bucket scopegrade)
    fake shops   control http://127.0.0.1:${p.shopsPort}/state, shops on ports ${p.shopsPort + 1}-${p.shopsPort + 5}
    database     ${p.databaseUrl}
  Demo sign-in: curator@scopegrade.test (curator), admin@scopegrade.test (admin), any other address (member).
  Press Ctrl-C to stop everything.
`);
} catch (err) {
	console.error(`\nnpm start failed: ${err.message}`);
	await shutdown(1);
}
