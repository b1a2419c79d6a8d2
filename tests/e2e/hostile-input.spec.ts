/**
 * Hostile input against every form action and JSON API, signed in as an admin (who may reach
 * them all): a corpus of NUL bytes, RTL overrides, 100 kB strings, HTML, SQL-ish text, huge,
 * fractional and padded numbers, wrong types, duplicate parameters, malformed JSON, broken
 * multipart and wrong content types. Nothing may answer 5xx, and nothing hostile may be stored.
 */
import { expect, test, type APIRequestContext, type APIResponse } from '@playwright/test';
import { signIn } from './support/inbox';

const origin = process.env.ORIGIN || `http://127.0.0.1:${process.env.PORT || 4400}`;

const BIG = 'x'.repeat(100_000);
const CORPUS: string[] = [
	'a\u0000b',
	'\u202Egnp.exe',
	BIG,
	'<script>alert(1)</script><img src=x onerror=alert(2)>',
	"' OR 1=1; DROP TABLE converter; --",
	'2147483648',
	'99999999999999999999',
	'1e308',
	'1.5',
	' 5 ',
	'-1',
	'',
	'true',
	'[1,2]',
	'{"a":1}',
	'=HYPERLINK("http://evil.example")'
];

/** Every field name any form posts (the union; each action ignores the ones it does not read). */
const FIELDS = [
	'name',
	'maker',
	'slug',
	'notes',
	'brand',
	'model',
	'summary',
	'power',
	'outputs',
	'hasAudioOut',
	'converterId',
	'code',
	'chipId',
	'boardMarking',
	'seenFrom',
	'seenTo',
	'reason',
	'id',
	'status',
	'title',
	'bodyMarkdown',
	'position',
	'note',
	'url',
	'format',
	'pollIntervalMinutes',
	'feedConfig',
	'shopId',
	'active',
	'role',
	'userId',
	'base',
	'quote',
	'day',
	'rate',
	'region',
	'currency',
	'baseUrl',
	'defaultFormat',
	'maxConcurrency',
	'minSpacingMs',
	'shipsTo',
	'converterSlug',
	'minBand',
	'quietFrom',
	'quietTo',
	'digestHour',
	'watchId',
	'alsoPriceDrops',
	'mode',
	'r0',
	'g0',
	'b0',
	'r100',
	'fullScaleMv',
	'termination',
	'decision',
	'revisionId',
	'boughtAt',
	'boughtOn',
	'unitCount',
	'verdict',
	'comment',
	'next',
	'email'
];

const ID = '1';
const MISSING = '2147483647';
const ACTIONS: Array<[string, string[]]> = [
	['/curate/chips', ['create']],
	[`/curate/chips/${ID}`, ['update', 'retire', 'restore']],
	[`/curate/chips/${MISSING}`, ['retire', 'restore']],
	['/curate/review', ['teardown', 'run', 'flag']],
	['/curate/guides', ['create']],
	[`/curate/guides/${MISSING}`, ['save', 'preview', 'status', 'addPick', 'removePick']],
	[`/curate/revisions/${ID}`, ['update', 'supersede', 'retire', 'restore']],
	[`/curate/revisions/${MISSING}`, ['retire', 'restore', 'supersede']],
	[`/curate/revisions/${ID}/runs/new`, ['readTrace', 'save']],
	['/curate/listings', ['create']],
	[`/curate/listings/${ID}`, ['pollNow', 'settings']],
	[`/curate/listings/${MISSING}`, ['testRead', 'pollNow', 'settings']],
	['/curate/converters', ['create']],
	[`/curate/converters/${ID}`, ['update', 'addRevision', 'retire', 'restore']],
	[`/curate/converters/${MISSING}`, ['retire', 'restore']],
	['/admin', ['role']],
	['/admin/rates', ['add']],
	['/admin/shops', ['create']],
	[`/admin/shops/${ID}`, ['update']],
	['/account/watches', ['create', 'update', 'pause', 'delete', 'prefs']],
	['/teardowns/new', ['default']],
	['/teardowns/bench-run', ['readTrace', 'save']],
	['/signin', ['default']]
];

function url(path: string, action: string) {
	return action === 'default' ? path : `${path}?/${action}`;
}

/**
 * No 5xx. SvelteKit answers a JSON action request with the error's own HTTP status (an action
 * failure is 200 with its status in the body, and a failure is never a 5xx).
 */
async function expectNo5xx(res: APIResponse, label: string) {
	expect(res.status(), label).toBeLessThan(500);
	const type = res.headers()['content-type'] ?? '';
	if (type.startsWith('application/json')) {
		const body = (await res.json().catch(() => null)) as { type?: string; status?: number } | null;
		if (body?.type === 'failure') expect(body.status ?? 400, `${label}: action failure`).toBeLessThan(500);
	}
}

async function post(request: APIRequestContext, target: string, init: Parameters<APIRequestContext['post']>[1]) {
	return request.post(target, {
		maxRedirects: 0,
		...init,
		headers: { Origin: origin, Accept: 'application/json', ...(init?.headers ?? {}) }
	});
}

test('every form action answers hostile input without a 5xx', async ({ page }) => {
	test.setTimeout(600_000);
	await signIn(page, 'owner@scopegrade.test');
	const request = page.request;
	for (const [path, actions] of ACTIONS) {
		for (const action of actions) {
			const target = url(path, action);
			for (const value of CORPUS) {
				const form = Object.fromEntries(FIELDS.map((f) => [f, value]));
				await expectNo5xx(await post(request, target, { form }), `${target} <- ${JSON.stringify(value.slice(0, 20))}`);
			}
			// Duplicate parameters, as multipart.
			await expectNo5xx(
				await post(request, target, { multipart: Object.fromEntries(FIELDS.map((f) => [f, '1'])), headers: {} }),
				`${target} multipart`
			);
			const dup = FIELDS.map((f) => `${f}=1&${f}=2147483648&${f}=a%00b`).join('&');
			await expectNo5xx(
				await post(request, target, { data: dup, headers: { 'content-type': 'application/x-www-form-urlencoded' } }),
				`${target} duplicates`
			);
			// Broken multipart and the wrong content type.
			await expectNo5xx(
				await post(request, target, {
					data: '--zz\r\nContent-Disposition: form-data; name="name"\r\n\r\nunterminated',
					headers: { 'content-type': 'multipart/form-data; boundary=zz' }
				}),
				`${target} broken multipart`
			);
			const json = await post(request, target, {
				data: '{"name": "x"',
				headers: { 'content-type': 'application/json' }
			});
			await expectNo5xx(json, `${target} json body`);
			expect(json.status(), `${target} json body`).toBe(415);
		}
	}
	// Ids beyond PostgreSQL integer never reach a query.
	for (const p of [
		'/curate/chips/2147483648',
		'/curate/converters/99999999999',
		'/admin/shops/1e3',
		'/curate/listings/1.5',
		'/curate/revisions/%200'
	]) {
		const res = await request.get(p);
		expect(res.status(), p).toBe(404);
	}

	// Nothing hostile was stored: no NUL, no 100 kB value, anywhere in the open-data export.
	const exported = await (await request.get('/api/v1/export/catalogue.json')).text();
	expect(exported).not.toContain('\\u0000');
	expect(exported).not.toContain(BIG.slice(0, 5000));
	const res = await request.get('/account/watches');
	expect(await res.text()).not.toContain(BIG.slice(0, 5000));
});

test('every JSON API answers hostile input without a 5xx, errors as problem details', async ({ page }) => {
	test.setTimeout(300_000);
	await signIn(page, 'owner@scopegrade.test');
	const request = page.request;
	const gets = [
		'/api/v1/converters',
		'/api/v1/finder',
		'/api/v1/listings',
		'/api/v1/curate/shops/health',
		'/api/v1/listings/1/history',
		'/api/v1/revisions/1',
		'/api/v1/converters/a',
		'/api/v1/export/catalogue.csv'
	];
	const params = [
		'region',
		'currency',
		'budget',
		'band',
		'page',
		'days',
		'range',
		'points',
		'audio',
		'power',
		'q',
		'sort',
		'converter',
		'shop',
		'output'
	];
	for (const path of gets) {
		for (const value of CORPUS.filter((v) => v !== BIG)) {
			const qs = params.map((p) => `${p}=${encodeURIComponent(value)}`).join('&');
			const res = await request.get(`${path}?${qs}`);
			expect(res.status(), `${path} <- ${JSON.stringify(value)}`).toBeLessThan(500);
			if (res.status() >= 400)
				expect(res.headers()['content-type'], `${path} problem type`).toContain('application/problem+json');
		}
	}
	for (const p of [
		'/api/v1/revisions/2147483648',
		'/api/v1/listings/99999999999/history',
		'/api/v1/watches/2147483648'
	]) {
		const res = p.includes('watches') ? await request.delete(p, { headers: { Origin: origin } }) : await request.get(p);
		expect(res.status(), p).toBe(404);
		expect(res.headers()['content-type'], p).toContain('application/problem+json');
	}
	const bodies: Array<[string, string]> = [
		['application/json', '{"converterSlug": '],
		['application/json', 'null'],
		['application/json', '[]'],
		['application/json', '"text"'],
		['application/json', '{"converterSlug": "a\\u0000b"}'],
		['application/json', JSON.stringify({ converterSlug: BIG })],
		['application/json', JSON.stringify({ converterSlug: 5, minBand: ['close'], maxPriceMinor: 1e308, regions: 'eu' })],
		['application/json', JSON.stringify({ converterSlug: 'x', maxPriceMinor: 1.5 })],
		['text/plain', 'converterSlug=x'],
		['multipart/form-data; boundary=zz', '--zz\r\nbroken']
	];
	for (const [type, data] of bodies) {
		const res = await request.post('/api/v1/watches', { data, headers: { 'content-type': type, Origin: origin } });
		expect(res.status(), `${type} ${data.slice(0, 40)}`).toBeGreaterThanOrEqual(400);
		expect(res.status(), `${type} ${data.slice(0, 40)}`).toBeLessThan(500);
		expect(res.headers()['content-type']).toContain('application/problem+json');
	}
	// Uploads: wrong type and broken multipart.
	for (const [type, data] of [
		['application/json', '{}'],
		['multipart/form-data; boundary=zz', '--zz\r\nbroken']
	]) {
		const res = await request.post('/files', { data, headers: { 'content-type': type, Origin: origin } });
		expect(res.status(), `/files ${type}`).toBe(400);
	}
	const watches = (await (await request.get('/api/v1/watches')).json()).watches as unknown[];
	expect(watches).toEqual([]);
});
