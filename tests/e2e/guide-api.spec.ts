/** /api/v1 public routes against the running app: shapes, validation errors, ETag and 304. */
import { expect, test } from '@playwright/test';
import { CONVERTERS, TESTERS, TESTER_REVISIONS } from '../../src/lib/demo/scenario';

test('converters list: shape, region pricing and ETag 304', async ({ request }) => {
	const res = await request.get('/api/v1/converters?region=eu&currency=EUR');
	expect(res.status()).toBe(200);
	const body = await res.json();
	expect(body).toMatchObject({ region: 'eu', currency: 'EUR', licence: 'CC BY 4.0' });
	expect(body.converters).toHaveLength(CONVERTERS.length);
	const scanlet = body.converters.find((c: { slug: string }) => c.slug === 'brisling-scanlet');
	expect(scanlet.revisions.map((r: { code: string; band: string }) => `${r.code}:${r.band}`)).toEqual([
		'A:close',
		'B:failing'
	]);
	expect(scanlet.bestOffer).toMatchObject({
		shop: { slug: 'kanalhaus' },
		displayPrice: { minor: 1190, currency: 'EUR' }
	});
	const etag = res.headers()['etag'];
	expect(etag).toMatch(/^"[^"]+"$/);
	const again = await request.get('/api/v1/converters?region=eu&currency=EUR', { headers: { 'If-None-Match': etag } });
	expect(again.status()).toBe(304);
	const other = await request.get('/api/v1/converters?region=jp', { headers: { 'If-None-Match': etag } });
	expect(other.status()).toBe(200);
});

test('validation errors are 400 problem details (RFC 9457) with field messages in errors', async ({ request }) => {
	for (const url of [
		'/api/v1/converters?region=mars',
		'/api/v1/finder?budget=-5',
		'/api/v1/listings',
		'/api/v1/finder?band=great'
	]) {
		const res = await request.get(url);
		expect(res.status(), url).toBe(400);
		expect(res.headers()['content-type'], url).toContain('application/problem+json');
		const body = await res.json();
		expect(body).toMatchObject({
			type: 'about:blank',
			title: expect.any(String),
			status: 400,
			detail: expect.any(String)
		});
		expect(Object.keys(body.errors).length, url).toBeGreaterThan(0);
		expect(typeof Object.values(body.errors)[0], url).toBe('string');
	}
	const missing = await request.get('/api/v1/converters/no-such-box');
	expect(missing.status()).toBe(404);
	expect(missing.headers()['content-type']).toContain('application/problem+json');
	expect((await request.get('/api/v1/revisions/0')).status()).toBe(404);
});

test('converter, revision and listings carry the engine reports and listing states', async ({ request }) => {
	const c = await (await request.get('/api/v1/converters/brisling-scanlet?region=eu')).json();
	const revB = c.converter.revisions.find((r: { code: string }) => r.code === 'B');
	expect(revB.runs).toHaveLength(2);
	expect(revB.runs[0].readings).toHaveLength(11);
	expect(revB.runs[0].report.band).toBe('failing');
	const r = await (await request.get(`/api/v1/revisions/${revB.id}`)).json();
	expect(r.converter.slug).toBe('brisling-scanlet');
	expect(r.revision.runs[0].report.findings.length).toBeGreaterThan(0);
	const l = await (await request.get('/api/v1/listings?converter=brisling-scanlet&region=eu')).json();
	expect(l.listings).toHaveLength(3);
	expect(l.listings[0]).toMatchObject({
		id: expect.any(Number),
		stock: expect.any(String),
		shop: { slug: expect.any(String) }
	});
});

test('finder API ranks and explains', async ({ request }) => {
	const body = await (
		await request.get('/api/v1/finder?region=eu&currency=EUR&audio=1&stock=1&band=close&budget=25')
	).json();
	// Beam Bridge (Exact, 22.90 EUR at Kanalhaus), then the RGB Porter (revision B Close, 21.50 EUR).
	expect(body.results.map((r: { slug: string }) => r.slug)).toEqual(['vantacove-beam-bridge', 'halvecraft-rgb-porter']);
	expect(body.results[0].explanation).toBe('Exact band; in stock at 1 shop in your region; lowest 22.90 EUR');
});

test('exports state their licence; OpenAPI 3.1 lists the routes', async ({ request, baseURL }) => {
	const csv = await request.get('/api/v1/export/catalogue.csv');
	expect(csv.headers()['content-type']).toContain('text/csv');
	expect(csv.headers()['link']).toContain('creativecommons.org/licenses/by/4.0');
	const lines = (await csv.text()).trim().split('\r\n');
	expect(lines[0].split(',')).toContain('licence');
	expect(lines).toHaveLength(1 + CONVERTERS.reduce((n, c) => n + c.revisions.length, 0)); // one row per demo revision
	const readings = await (await request.get('/api/v1/export/readings.json')).json();
	expect(readings.licence.name).toBe('CC BY 4.0');
	// every accepted demo run (curators' and the three testers'), 11 steps each
	const runs =
		CONVERTERS.reduce((n, c) => n + c.revisions.reduce((m, r) => m + r.runs, 0), 0) +
		TESTERS.length * TESTER_REVISIONS.length;
	expect(readings.count).toBe(runs * 11);
	expect((await request.get('/api/v1/export/other.csv')).status()).toBe(404);
	const doc = await (await request.get('/api/v1/openapi.json')).json();
	expect(doc.openapi).toBe('3.1.0');
	// the server URL is the configured origin's, whatever Host the request names
	expect(doc.servers).toEqual([{ url: `${new URL(baseURL!).origin}/api/v1` }]);
	const forged = await request.get('/api/v1/openapi.json', { headers: { host: 'attacker.example' } });
	expect((await forged.json()).servers).toEqual(doc.servers);
	expect(Object.keys(doc.paths)).toEqual(
		expect.arrayContaining([
			'/converters',
			'/converters/{slug}',
			'/revisions/{id}',
			'/listings',
			'/finder',
			'/export/{file}'
		])
	);
});
