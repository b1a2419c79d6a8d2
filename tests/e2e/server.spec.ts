/**
 * The app's own HTTP server (scripts/serve.mjs): answers compressed as the client negotiates
 * (RFC 9110 §12.5.3 Accept-Encoding; brotli per RFC 7932, gzip per RFC 1952, checked by decoding
 * with node:zlib), static assets sent precompressed, and, on glibc, the server running as a
 * worker under a primary that gives it its malloc tuning and stops with it.
 */
import { expect, test } from '@playwright/test';
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { readFileSync, readdirSync } from 'node:fs';
import http from 'node:http';
import { resolve } from 'node:path';
import zlib from 'node:zlib';

const APP_PORT = Number(process.env.PORT || 4400);
const ORIGIN = `http://127.0.0.1:${APP_PORT}`;
const BUILD = resolve(process.env.SG_BUILD_DIR || 'build');

/** The raw bytes and headers of one GET (fetch would decode the body). */
function rawGet(url: string, acceptEncoding: string) {
	return new Promise<{ status: number; headers: http.IncomingHttpHeaders; body: Buffer }>((ok, fail) => {
		http
			.get(url, { headers: { 'accept-encoding': acceptEncoding } }, (res) => {
				const chunks: Buffer[] = [];
				res.on('data', (c: Buffer) => chunks.push(c));
				res.on('end', () => ok({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
				res.on('error', fail);
			})
			.on('error', fail);
	});
}

function decode(body: Buffer, encoding: string | undefined): string {
	if (encoding === 'br') return zlib.brotliDecompressSync(body).toString('utf8');
	if (encoding === 'gzip') return zlib.gunzipSync(body).toString('utf8');
	return body.toString('utf8');
}

const GLIBC = Boolean(
	(process.report.getReport() as { header?: { glibcVersionRuntime?: string } }).header?.glibcVersionRuntime
);

for (const path of ['/converters', '/api/v1/converters', '/api/v1/export/catalogue.csv', '/restocks/feed.atom']) {
	test(`${path} goes out as the client negotiates: br, gzip or not at all`, async () => {
		const plain = await rawGet(ORIGIN + path, 'identity');
		expect(plain.status).toBe(200);
		expect(plain.headers['content-encoding']).toBeUndefined();
		for (const [asked, expected] of [
			['br, gzip', 'br'],
			['gzip', 'gzip'],
			['gzip;q=1, br;q=0', 'gzip']
		] as const) {
			const res = await rawGet(ORIGIN + path, asked);
			expect(res.headers['content-encoding'], asked).toBe(expected);
			expect(res.headers.vary ?? '').toMatch(/accept-encoding/i);
			expect(res.body.length, asked).toBeLessThan(plain.body.length);
			// Same document once decoded (the CSV and the feed carry no per-request parts).
			const text = decode(res.body, expected);
			if (path.endsWith('.csv') || path.endsWith('.atom')) expect(text).toBe(plain.body.toString('utf8'));
			else expect(text.length).toBeGreaterThan(plain.body.length * 0.9);
		}
	});
}

test('static assets are sent precompressed as built', async () => {
	const dir = resolve(BUILD, 'client/_app/immutable/entry');
	const js = readdirSync(dir).find((f) => f.endsWith('.js') && readdirSync(dir).includes(`${f}.br`))!;
	expect(js).toBeTruthy();
	const res = await rawGet(`${ORIGIN}/_app/immutable/entry/${js}`, 'br, gzip');
	expect(res.headers['content-encoding']).toBe('br');
	expect(res.body.equals(readFileSync(resolve(dir, `${js}.br`)))).toBe(true);
});

test('with the page cache off, public answers keep their caching headers and 304', async () => {
	test.setTimeout(60_000);
	const port = APP_PORT + 64;
	const origin = `http://127.0.0.1:${port}`;
	const app = spawn(process.execPath, [resolve('scripts/serve.mjs'), BUILD], {
		env: { ...process.env, HOST: '127.0.0.1', PORT: String(port), ORIGIN: origin, PAGE_CACHE: 'off' },
		stdio: 'ignore'
	});
	try {
		await expect
			.poll(async () => (await fetch(`${origin}/robots.txt`).catch(() => null))?.status, { timeout: 30_000 })
			.toBe(200);
		for (const path of ['/converters?region=jp', '/api/v1/converters?region=jp']) {
			const page = await rawGet(origin + path, 'br, gzip');
			expect(page.status, path).toBe(200);
			expect(page.headers['x-page-cache'], path).toBe('miss');
			expect(page.headers['cache-control'], path).toMatch(/^public, .*s-maxage=\d+/);
			expect(page.headers.vary ?? '', path).toMatch(/accept-encoding/i);
			// compressed as it streams through, and whole
			expect(page.headers['content-encoding'], path).toBe('br');
			const text = decode(page.body, 'br');
			expect(text, path).toMatch(path.startsWith('/api/') ? /^\{"region":"jp"/ : /<\/html>\s*$/);
			// a page remembers the region picked in its URL; the API never sets a cookie (RFC 6265)
			const cookies = page.headers['set-cookie'] ?? [];
			if (path.startsWith('/api/')) expect(cookies, path).toEqual([]);
			else
				expect(
					cookies.some((c) => c.includes('=jp;')),
					path
				).toBe(true);
			// RFC 9110 §13.1.2: a matching If-None-Match gets 304 and no body
			// a strong validator of these very bytes: their SHA-256 (FIPS 180-4) as base64url, cut to 27
			// characters (SvelteKit's page ETag as patched in patches/, the API's from public-http)
			const etag = page.headers.etag!;
			const sha = createHash('sha256').update(zlib.brotliDecompressSync(page.body)).digest('base64url');
			expect(etag, path).toBe(`"${sha.slice(0, 27)}"`);
			const again = await fetch(origin + path, { headers: { 'if-none-match': etag } });
			expect(again.status, path).toBe(304);
			expect(await again.text(), path).toBe('');
		}
	} finally {
		app.kill('SIGTERM');
	}
});

test.describe('serve.mjs as a process', () => {
	// Runs here and in CI (Debian, glibc). It reads the worker from /proc (Linux) and checks the
	// malloc tuning, which serve.mjs gives only on glibc; elsewhere there is nothing of it to check.
	test.skip(
		process.platform !== 'linux' || !GLIBC,
		'reads /proc and checks the glibc malloc tuning: Linux with glibc only'
	);

	const PORT = APP_PORT + 63;
	const env: NodeJS.ProcessEnv = {
		...process.env,
		HOST: '127.0.0.1',
		PORT: String(PORT),
		ORIGIN: `http://127.0.0.1:${PORT}`
	};
	delete env.GLIBC_TUNABLES;
	delete env.WEB_CONCURRENCY;

	const childrenOf = (pid: number) =>
		readFileSync(`/proc/${pid}/task/${pid}/children`, 'utf8').trim().split(/\s+/).filter(Boolean).map(Number);
	const alive = (pid: number) => {
		try {
			process.kill(pid, 0);
			return true;
		} catch {
			return false;
		}
	};

	test('runs the server as a worker with the malloc and young-generation tuning; SIGTERM stops both', async () => {
		test.setTimeout(60_000);
		const primary = spawn(process.execPath, [resolve('scripts/serve.mjs'), BUILD], { env, stdio: 'ignore' });
		const exited = new Promise<number | null>((r) => primary.once('exit', (code) => r(code)));
		try {
			await expect
				.poll(async () => (await fetch(`http://127.0.0.1:${PORT}/robots.txt`).catch(() => null))?.status, {
					timeout: 30_000
				})
				.toBe(200);
			const [worker] = childrenOf(primary.pid!);
			expect(worker).toBeGreaterThan(0);
			// glibc keeps the first tunable of the list in the environment it passes on (it parses in place)
			const environ = readFileSync(`/proc/${worker}/environ`, 'utf8').split('\0');
			expect(environ.find((v) => v.startsWith('GLIBC_TUNABLES='))).toMatch(/^GLIBC_TUNABLES=glibc\.malloc\./);
			// and V8's larger young generation, as no size was given
			expect(readFileSync(`/proc/${worker}/cmdline`, 'utf8').split('\0')).toContain('--max-semi-space-size=64');
			primary.kill('SIGTERM');
			expect(await exited).toBe(0);
			await expect.poll(() => alive(worker), { timeout: 10_000 }).toBe(false);
		} finally {
			if (primary.exitCode === null) primary.kill('SIGKILL');
		}
	});

	test('a worker that cannot start (its port is taken) ends the process with an error', async () => {
		test.setTimeout(60_000);
		const taken = http.createServer();
		await new Promise<void>((ok) => taken.listen(PORT, '127.0.0.1', ok));
		try {
			const primary = spawn(process.execPath, [resolve('scripts/serve.mjs'), BUILD], { env, stdio: 'ignore' });
			const code = await new Promise<number | null>((r) => primary.once('exit', (c) => r(c)));
			expect(code).not.toBe(0);
		} finally {
			await new Promise((r) => taken.close(r));
		}
	});
});
