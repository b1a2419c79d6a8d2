/**
 * Listing URLs: the host must be the shop's own, and private, loopback and link-local
 * addresses are refused unless FEED_ALLOW_PRIVATE is set (the fake shops).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as t from '../../src/lib/server/db/schema';
import { addressProblem, checkFeedUrl, type LookupFn } from '../../src/lib/server/curate/feed-url';
import { createListing } from '../../src/lib/server/curate/listings';
import { createConverter } from '../../src/lib/server/curate/catalogue';
import { curateWorld } from './helpers/curate-world';

const resolvesTo =
	(...addresses: string[]): LookupFn =>
	async () =>
		addresses.map((address) => ({ address, family: address.includes(':') ? 6 : 4 }));

describe('address ranges', () => {
	it.each([
		['127.0.0.1', /loopback/],
		['10.1.2.3', /private/],
		['172.31.255.1', /private/],
		['192.168.0.10', /private/],
		['169.254.169.254', /link-local/],
		['100.64.0.1', /carrier-grade/],
		['0.0.0.0', /this network/],
		['::1', /loopback/],
		['fd12:3456::1', /unique local/],
		['fe80::1', /link-local/],
		['::ffff:127.0.0.1', /loopback/],
		['::ffff:10.0.0.1', /private/]
	])('%s is refused', (ip, why) => {
		expect(addressProblem(ip)).toMatch(why);
	});
	it.each(['93.184.216.34', '8.8.4.4', '2606:4700::1111', '172.32.0.1'])('%s is public', (ip) => {
		expect(addressProblem(ip)).toBeNull();
	});
});

describe('checkFeedUrl', () => {
	const base = 'https://shop.example';
	it('refuses a host that resolves to a private address', async () => {
		const r = await checkFeedUrl('https://shop.example/p/1', base, { lookup: resolvesTo('93.184.216.34', '10.0.0.5') });
		expect(r).toEqual({
			ok: false,
			reason: expect.stringMatching(/shop.example points to 10.0.0.5, a private address/)
		});
	});
	it('refuses another host, a look-alike host and another port', async () => {
		const lookup = resolvesTo('93.184.216.34');
		for (const u of [
			'https://other.example/p',
			'https://shop.example.attacker.test/p',
			'https://shop.example:8443/p'
		]) {
			const r = await checkFeedUrl(u, base, { lookup });
			expect(r.ok, u).toBe(false);
			if (!r.ok) expect(r.reason).toMatch(/must be on the shop's own site/);
		}
	});
	it('refuses other schemes and credentials', async () => {
		expect((await checkFeedUrl('file:///etc/passwd', base)).ok).toBe(false);
		expect((await checkFeedUrl('https://u:p@shop.example/', base, { lookup: resolvesTo('93.184.216.34') })).ok).toBe(
			false
		);
	});
	it('admits a public address, and loopback only when private addresses are allowed', async () => {
		expect((await checkFeedUrl('https://shop.example/p/1', base, { lookup: resolvesTo('93.184.216.34') })).ok).toBe(
			true
		);
		expect((await checkFeedUrl('http://127.0.0.1:4411/p', 'http://127.0.0.1:4411')).ok).toBe(false);
		expect((await checkFeedUrl('http://127.0.0.1:4411/p', 'http://127.0.0.1:4411', { allowPrivate: true })).ok).toBe(
			true
		);
	});
});

describe('createListing', () => {
	let w: Awaited<ReturnType<typeof curateWorld>>;
	beforeAll(async () => {
		w = await curateWorld('curate_feed_url');
	});
	afterAll(async () => w?.close());

	it('refuses a listing on a private address and stores nothing', async () => {
		const [shop] = await w.db
			.insert(t.shops)
			.values({
				slug: 'loop-shop',
				name: 'Loop Shop',
				region: 'eu',
				currency: 'EUR',
				baseUrl: 'http://127.0.0.1:4999',
				defaultFormat: 'jsonld'
			})
			.returning();
		const conv = await createConverter(w.db, w.curator, {
			brand: 'B',
			model: 'M',
			slug: '',
			summary: '',
			hasAudioOut: false,
			power: 'usb-bus',
			outputs: ['vga']
		});
		const input = {
			shopId: shop.id,
			converterId: conv.id,
			url: 'http://127.0.0.1:4999/p/1',
			format: 'jsonld' as const,
			pollIntervalMinutes: 60,
			feedConfig: ''
		};
		await expect(createListing(w.db, w.curator, input)).rejects.toMatchObject({
			field: 'url',
			message: expect.stringMatching(/loopback/)
		});
		expect(await w.db.select().from(t.listings)).toHaveLength(0);
		const ok = await createListing(w.db, w.curator, input, { allowPrivate: true });
		expect(ok.url).toBe('http://127.0.0.1:4999/p/1');
	});
});
