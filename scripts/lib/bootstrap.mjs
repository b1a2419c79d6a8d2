// What both README commands do first: system packages, npm packages, a local PostgreSQL.
import { createHash, randomBytes } from 'node:crypto';
import { chmodSync, existsSync, mkdirSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { ROOT } from './profiles.mjs';
import { capture, log, run } from './run.mjs';

const isRoot = process.getuid?.() === 0;

/** Install Debian packages that are missing (needs root, as on our machines and CI). */
function aptInstall(packages) {
	if (!isRoot) {
		throw new Error(
			`missing system packages: ${packages.join(' ')}. Install them (sudo apt-get install -y ${packages.join(' ')}) and run again.`
		);
	}
	log(`installing ${packages.join(', ')} from Debian's packages (first run only)…`);
	run('apt-get', ['update', '-qq']);
	run('apt-get', ['install', '-y', '-qq', '--no-install-recommends', ...packages], {
		env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
	});
}

/** Directory holding initdb/pg_ctl, or null. */
export function findPgBin() {
	const base = '/usr/lib/postgresql';
	if (!existsSync(base)) return null;
	const versions = readdirSync(base)
		.filter((v) => existsSync(resolve(base, v, 'bin', 'initdb')))
		.sort((a, b) => Number(b) - Number(a));
	return versions.length ? resolve(base, versions[0], 'bin') : null;
}

export function ensurePostgresInstalled() {
	if (!findPgBin()) aptInstall(['postgresql']);
	const bin = findPgBin();
	if (!bin) throw new Error('PostgreSQL was installed but initdb is not under /usr/lib/postgresql/*/bin');
	return bin;
}

export function ensureChromium() {
	if (!existsSync('/usr/bin/chromium')) aptInstall(['chromium']);
}

/** Java for the Nu HTML Checker (npm vnu-jar) in the end-to-end phase. */
export function ensureJava() {
	const onPath = (process.env.PATH ?? '').split(':').some((dir) => dir && existsSync(resolve(dir, 'java')));
	if (!onPath) aptInstall(['default-jre-headless']);
}

/**
 * `npm ci` when node_modules is missing or was installed from another lock file or other patches
 * (patches/, applied by patch-package after every install). Dependencies' own install scripts do
 * not run: the only ones are esbuild's (an optional check; esbuild runs from its platform package
 * without it) and the Nu HTML Checker's, which downloads a Java runtime when it finds none; the
 * tests run the checker with Debian's Java (`ensureJava`). Our own postinstall (patch-package)
 * and prepare (svelte-kit sync) run after it.
 */
export function ensureNodeModules() {
	const hasher = createHash('sha256').update(readFileSync(resolve(ROOT, 'package-lock.json')));
	const patches = resolve(ROOT, 'patches');
	for (const name of existsSync(patches) ? readdirSync(patches).sort() : []) {
		hasher.update(name).update(readFileSync(resolve(patches, name)));
	}
	const hash = hasher.digest('hex');
	const stamp = resolve(ROOT, 'node_modules', '.scopegrade-lock-hash');
	if (existsSync(stamp) && readFileSync(stamp, 'utf8') === hash) return;
	log('installing npm packages (npm ci)…');
	run('npm', ['ci', '--no-audit', '--no-fund', '--ignore-scripts'], { cwd: ROOT });
	run('npm', ['run', 'postinstall'], { cwd: ROOT });
	run('npm', ['run', 'prepare'], { cwd: ROOT });
	writeFileSync(stamp, hash);
}

/** Run a PostgreSQL binary as the postgres user when we are root (initdb refuses root). */
function pgExec(bin, tool, args, opts = {}) {
	const exe = resolve(bin, tool);
	return isRoot ? capture('runuser', ['-u', 'postgres', '--', exe, ...args], opts) : capture(exe, args, opts);
}

function chownToPostgres(path) {
	if (isRoot) run('chown', ['-R', 'postgres:postgres', path]);
}

/** Create the project-local cluster if needed and start it on loopback. Returns true if we started it. */
export async function startCluster(p, { fast = false } = {}) {
	const bin = ensurePostgresInstalled();
	mkdirSync(p.dataDir, { recursive: true });
	chmodSync(resolve(ROOT, '.data'), 0o755);
	chmodSync(p.dataDir, 0o755);
	const home = dirname(p.pgDataDir);
	mkdirSync(home, { recursive: true });
	chmodSync(home, 0o755);
	if (!existsSync(resolve(p.pgDataDir, 'PG_VERSION'))) {
		log(`creating a PostgreSQL cluster in ${p.pgDataDir}…`);
		mkdirSync(p.pgDataDir, { recursive: true, mode: 0o700 });
		chmodSync(p.pgDataDir, 0o700);
		const pwfile = `/tmp/sg-pwfile-${p.pgPort}`; // /tmp: readable by postgres wherever the checkout is
		writeFileSync(pwfile, p.pgPassword + '\n', { mode: 0o644 });
		chownToPostgres(p.pgDataDir);
		chownToPostgres(pwfile);
		const r = pgExec(bin, 'initdb', [
			'-D',
			p.pgDataDir,
			'-U',
			p.pgUser,
			'--pwfile',
			pwfile,
			'-E',
			'UTF8',
			'--locale=C.UTF-8',
			'--auth-local=trust',
			'--auth-host=scram-sha-256'
		]);
		capture('rm', ['-f', pwfile]);
		if (r.status !== 0) throw new Error(`initdb failed:\n${r.stdout}\n${r.stderr}`);
	}
	mkdirSync(p.pgSocketDir, { recursive: true });
	chownToPostgres(p.pgSocketDir);
	const status = pgExec(bin, 'pg_ctl', ['-D', p.pgDataDir, 'status']);
	if (status.status === 0) return false; // already running (e.g. left over from a crash)
	const logFile = p.pgLog;
	writeFileSync(logFile, '');
	if (isRoot) run('chown', ['postgres:postgres', logFile]);
	const options = [`-c listen_addresses=127.0.0.1`, `-p ${p.pgPort}`, `-k ${p.pgSocketDir}`];
	if (fast) options.push('-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off');
	const r = pgExec(bin, 'pg_ctl', [
		'-D',
		p.pgDataDir,
		'-l',
		logFile,
		'-w',
		'-t',
		'30',
		'-o',
		options.join(' '),
		'start'
	]);
	if (r.status !== 0) {
		const tail = existsSync(logFile) ? readFileSync(logFile, 'utf8').split('\n').slice(-15).join('\n') : '';
		throw new Error(`PostgreSQL did not start on port ${p.pgPort}:\n${r.stderr}\n${tail}`);
	}
	return true;
}

export function stopCluster(p) {
	const bin = findPgBin();
	if (!bin || !existsSync(resolve(p.pgDataDir, 'PG_VERSION'))) return;
	pgExec(bin, 'pg_ctl', ['-D', p.pgDataDir, '-m', 'fast', '-w', 'stop']);
}

/** psql as the cluster's superuser over the Unix socket (trust auth, local only). */
export function psql(p, database, sqlText) {
	const bin = findPgBin();
	const r = capture(resolve(bin, 'psql'), [
		'-h',
		p.pgSocketDir,
		'-p',
		String(p.pgPort),
		'-U',
		p.pgUser,
		'-d',
		database,
		'-v',
		'ON_ERROR_STOP=1',
		'-qtAc',
		sqlText
	]);
	if (r.status !== 0) throw new Error(`psql failed: ${r.stderr}`);
	return r.stdout.trim();
}

export function ensureDatabase(p, { fresh = false } = {}) {
	if (fresh) psql(p, 'postgres', `drop database if exists ${p.database} with (force)`);
	const exists = psql(p, 'postgres', `select 1 from pg_database where datname = '${p.database}'`);
	if (!exists) psql(p, 'postgres', `create database ${p.database}`);
}

/** A stable random AUTH_SECRET per profile, kept in the git-ignored data folder. */
export function authSecret(p) {
	const file = resolve(p.dataDir, 'auth-secret');
	mkdirSync(p.dataDir, { recursive: true });
	if (!existsSync(file)) writeFileSync(file, randomBytes(32).toString('base64url'), { mode: 0o600 });
	return readFileSync(file, 'utf8').trim();
}
