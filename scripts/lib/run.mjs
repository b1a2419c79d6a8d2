// Small process helpers for the start and test scripts.
import { spawn, spawnSync } from 'node:child_process';
import { createServer } from 'node:net';

export const log = (msg) => console.log(`\x1b[33m[scopegrade]\x1b[0m ${msg}`);

/** Run a command to completion, inheriting output; throw on a non-zero exit. */
export function run(cmd, args, opts = {}) {
	const r = spawnSync(cmd, args, { stdio: 'inherit', ...opts });
	if (r.error) throw new Error(`${cmd} could not start: ${r.error.message}`);
	if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} exited with ${r.status}`);
	return r;
}

/** Run and capture stdout; returns { status, stdout, stderr }. */
export function capture(cmd, args, opts = {}) {
	const r = spawnSync(cmd, args, { encoding: 'utf8', ...opts });
	return { status: r.status ?? 1, stdout: r.stdout ?? '', stderr: r.stderr ?? '', error: r.error };
}

/** Start a long-running child whose output lines get a coloured name prefix. */
export function startService(name, cmd, args, opts = {}) {
	const child = spawn(cmd, args, { stdio: ['ignore', 'pipe', 'pipe'], ...opts });
	const prefix = `\x1b[36m${name.padEnd(6)}\x1b[0m| `;
	const pipe = (stream, out) => {
		let buf = '';
		stream.on('data', (d) => {
			buf += d;
			let i;
			while ((i = buf.indexOf('\n')) >= 0) {
				out.write(prefix + buf.slice(0, i) + '\n');
				buf = buf.slice(i + 1);
			}
		});
	};
	pipe(child.stdout, process.stdout);
	pipe(child.stderr, process.stderr);
	child.serviceName = name;
	return child;
}

/** True when nothing listens on 127.0.0.1:port. */
export function portIsFree(port) {
	return new Promise((resolve) => {
		const srv = createServer();
		srv.once('error', () => resolve(false));
		srv.listen(port, '127.0.0.1', () => srv.close(() => resolve(true)));
	});
}

/** Poll an HTTP URL until it answers (any status), or fail after timeoutMs. */
export async function waitForHttp(url, timeoutMs = 30_000, child) {
	const start = Date.now();
	while (Date.now() - start < timeoutMs) {
		if (child && child.exitCode !== null) throw new Error(`${child.serviceName} exited early (code ${child.exitCode})`);
		try {
			await fetch(url, { signal: AbortSignal.timeout(2000) });
			return;
		} catch {
			await new Promise((r) => setTimeout(r, 250));
		}
	}
	throw new Error(`${url} did not answer within ${timeoutMs / 1000} s`);
}

/** Stop children: SIGTERM, then SIGKILL after a grace period. */
export async function stopAll(children, graceMs = 5000) {
	await Promise.all(
		children.map(
			(c) =>
				new Promise((resolve) => {
					if (c.exitCode !== null || c.signalCode !== null) return resolve();
					const t = setTimeout(() => c.kill('SIGKILL'), graceMs);
					c.once('exit', () => {
						clearTimeout(t);
						resolve();
					});
					c.kill('SIGTERM');
				})
		)
	);
}
