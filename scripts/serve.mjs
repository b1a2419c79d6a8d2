#!/usr/bin/env node
// The app's HTTP server: adapter-node's request handler behind the `compression` middleware, so
// HTML, JSON, CSV and the Atom feed go out gzip- or brotli-compressed as the client asks
// (Accept-Encoding); static assets are precompressed at build (svelte.config.js) and sent as is.
// Usage: node scripts/serve.mjs [build folder]  (default SG_BUILD_DIR, else build). HOST, PORT,
// ORIGIN, BODY_SIZE_LIMIT and the rest of adapter-node's environment apply as with `node build`.
// WEB_CONCURRENCY=N (default 1) runs N worker processes sharing the port (node:cluster), one per
// core in production: each is an ordinary stateless app instance with its own page cache and pool.
// The server runs as a worker under a small primary, which starts it with a larger young generation
// for V8 and, on glibc, fixed malloc thresholds.
import cluster from 'node:cluster';
import http from 'node:http';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import zlib from 'node:zlib';
import compression from 'compression';
import { endWithLastWrite } from './lib/end-with-last-write.mjs';

const workers = Math.max(1, Number(process.env.WEB_CONCURRENCY || 1));

// glibc's malloc adjusts its thresholds as it goes and hands large freed blocks back to the kernel;
// every response's brotli encoder allocates a few such blocks, so under load each one paid page
// faults to get its memory back. Fixed thresholds keep the memory in the process (measured with
// /api/v1/converters at 32 connections, cache off: CPU per request 5.3-6.7 -> 4.4-4.5 ms, kernel
// time 0.9-1.4 -> 0.5 ms, peak RSS about 40 MB more). The loader reads GLIBC_TUNABLES at process start, so workers get it from the
// primary; a GLIBC_TUNABLES already set is left as it is, and other C libraries ignore it.
const MALLOC_TUNABLES = 'glibc.malloc.mmap_threshold=8388608:glibc.malloc.trim_threshold=33554432';
const tuneMalloc =
	process.platform === 'linux' &&
	!process.env.GLIBC_TUNABLES &&
	Boolean(/** @type {any} */ (process.report.getReport()).header?.glibcVersionRuntime);

// V8's young generation: every page render leaves about a megabyte of short-lived objects, and
// with 32 requests in flight the default 16 MB semi-space fills several times a second, each
// scavenge copying what the requests still hold and promoting much of it into the old generation
// (cache off, 32 connections: garbage collection was a fifth of the CPU). 64 MB lets most of it die
// young, for up to about 200 MB more memory under load. A size given in NODE_OPTIONS or on the
// command line is kept.
const SEMI_SPACE = '--max-semi-space-size=64';
const tuneHeap = ![...process.execArgv, process.env.NODE_OPTIONS ?? ''].some((a) =>
	a.includes('--max-semi-space-size')
);

if (cluster.isPrimary && (workers > 1 || tuneMalloc || tuneHeap)) {
	if (tuneHeap) cluster.setupPrimary({ execArgv: [...process.execArgv, SEMI_SPACE] });
	let stopping = false;
	const fork = () => {
		const worker = cluster.fork(tuneMalloc ? { GLIBC_TUNABLES: MALLOC_TUNABLES } : {});
		let listening = false;
		worker.on('listening', () => (listening = true));
		worker.on('exit', (code) => {
			if (stopping) return;
			// a worker that never got to listen (port taken, bad settings) would fail again: stop
			if (!listening) process.exit(code || 1);
			setTimeout(fork, 1000);
		});
	};
	for (let i = 0; i < workers; i++) fork();
	const stopAll = () => {
		stopping = true;
		for (const w of Object.values(cluster.workers ?? {})) w?.process.kill('SIGTERM');
		const done = () => Object.keys(cluster.workers ?? {}).length === 0 && process.exit(0);
		cluster.on('exit', done);
		done();
	};
	process.on('SIGTERM', stopAll);
	process.on('SIGINT', stopAll);
} else await serve();

async function serve() {
	const dir = resolve(process.argv[2] || process.env.SG_BUILD_DIR || 'build');
	const { handler } = await import(pathToFileURL(resolve(dir, 'handler.js')).href);

	// Below 1 kB compressing costs more than it saves. Brotli quality 1 with a 256 kB window (the
	// default is 4 MB), larger than any page we send: each response sets up its own encoder, and the
	// default window made that the larger cost (a 170 kB page 1.7 -> 0.8 ms, a 100 kB JSON 1.6 ->
	// 0.4 ms, 32 at once). Quality 1 rather than 2 (or 4): the catalogue page compresses in 0.07 ms
	// instead of 0.15 (0.29 at 4), a converter page in 0.10 instead of 0.17 and the catalogue JSON in
	// 0.07 instead of 0.14, for 7-13 % more bytes (7.3, 11.5 and 6.2 kB instead of 6.7, 10.7 and
	// 5.5). These are the answers rendered for one request; those the page cache keeps are
	// compressed once, harder (page-cache.ts).
	const compress = compression({
		threshold: 1024,
		brotli: { params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 1, [zlib.constants.BROTLI_PARAM_LGWIN]: 18 } }
	});
	// The page cache (src/lib/server/page-cache.ts) registers its fast path when the app loads: a hit
	// is answered here, already compressed, without building a Request for SvelteKit.
	const PAGE_CACHE = Symbol.for('scopegrade.page-cache');
	const server = http.createServer((req, res) => {
		if (globalThis[PAGE_CACHE]?.serveCachedHit(req, res)) return;
		compress(req, res, (err) => {
			if (err) {
				res.statusCode = 500;
				res.end();
				return;
			}
			endWithLastWrite(res);
			handler(req, res);
		});
	});
	server.keepAliveTimeout = 65_000;

	const host = process.env.HOST || '0.0.0.0';
	const port = Number(process.env.PORT || 3000);
	server.listen(port, host, () => {
		console.log(`Listening on http://${host}:${port}`);
		// After an invalidation the page cache renders recently visited pages again through us.
		const self = host === '0.0.0.0' ? '127.0.0.1' : host === '::' ? '::1' : host;
		globalThis[PAGE_CACHE]?.setRewarmer(
			({ path, headers }) =>
				new Promise((done) => {
					http
						.get({ host: self, port, path, headers, agent: rewarmAgent }, (res) => {
							res.resume();
							res.on('end', done);
							res.on('error', done);
						})
						.on('error', done);
				})
		);
	});
	const rewarmAgent = new http.Agent({ keepAlive: true, maxSockets: 1 });

	function stop() {
		globalThis[PAGE_CACHE]?.setRewarmer(null);
		rewarmAgent.destroy();
		server.close(() => process.exit(0));
		server.closeIdleConnections?.();
		setTimeout(() => process.exit(0), Number(process.env.SHUTDOWN_TIMEOUT || 30) * 1000).unref();
	}
	process.on('SIGTERM', stop);
	process.on('SIGINT', stop);
	// A worker whose primary went away (killed without a chance to stop us) stops too.
	if (cluster.isWorker) process.on('disconnect', stop);
}
