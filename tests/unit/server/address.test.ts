/**
 * The shared address check. Ranges are the IANA IPv4 and IPv6 Special-Purpose Address
 * Registries (RFC 6890 and updates): RFC 1122 "this network" and loopback, RFC 1918 private,
 * RFC 6598 shared (CGNAT), RFC 3927 / RFC 4291 link-local, RFC 4193 unique local, RFC 5737 and
 * RFC 3849 documentation, RFC 2544 benchmarking, RFC 4291 section 2.5.5 IPv4-mapped and
 * IPv4-compatible, RFC 6052 / RFC 8215 NAT64, RFC 3056 6to4, RFC 4380 Teredo.
 */
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	addressProblem,
	assertFetchableUrl,
	guardedFetch,
	type Resolver
} from '../../../src/lib/server/security/address';
import { isPrivateAddress } from '../../../src/lib/server/polling/net';

const refused: Array<[string, RegExp]> = [
	// IPv4
	['127.0.0.1', /loopback/],
	['127.255.255.254', /loopback/],
	['0.0.0.0', /this network/],
	['10.1.2.3', /private/],
	['172.16.0.1', /private/],
	['192.168.1.1', /private/],
	['169.254.169.254', /link-local/],
	['100.64.0.1', /carrier-grade/],
	['192.0.0.8', /reserved/],
	['192.0.2.1', /documentation/],
	['198.51.100.7', /documentation/],
	['203.0.113.9', /documentation/],
	['198.18.0.1', /benchmarking/],
	['224.0.0.1', /multicast/],
	['240.0.0.1', /reserved/],
	['255.255.255.255', /broadcast/],
	// IPv6
	['::', /unspecified/],
	['::1', /loopback/],
	['0:0:0:0:0:0:0:1', /loopback/],
	['fe80::1', /link-local/],
	['fe80::1%eth0', /link-local/],
	['fd12:3456::1', /unique local/],
	['fc00::1', /unique local/],
	['fec0::1', /site-local/],
	['ff02::1', /multicast/],
	['2001:db8::1', /reserved|documentation/],
	['100::1', /discard/],
	// IPv4-mapped IPv6, every spelling
	['::ffff:127.0.0.1', /IPv4-mapped.*loopback/],
	['::ffff:7f00:1', /IPv4-mapped.*loopback/],
	['[::ffff:7f00:1]', /IPv4-mapped.*loopback/],
	['0:0:0:0:0:ffff:7f00:1', /IPv4-mapped.*loopback/],
	['0000:0000:0000:0000:0000:FFFF:7F00:0001', /IPv4-mapped.*loopback/],
	['::FFFF:10.0.0.1', /IPv4-mapped.*private/],
	['::ffff:a9fe:a9fe', /IPv4-mapped.*link-local/],
	['::ffff:8.8.8.8', /IPv4-mapped address/],
	// IPv4-compatible (deprecated) and other embeddings
	['::7f00:1', /global unicast/],
	['::127.0.0.1', /global unicast|IPv4-mapped/], // ipaddr.js reads this spelling as mapped
	['64:ff9b::7f00:1', /NAT64/],
	['64:ff9b::8.8.8.8', /NAT64/],
	['64:ff9b:1::a00:1', /NAT64/],
	['2002:7f00:1::1', /6to4/],
	['2002:c0a8:101::1', /6to4/],
	['2001:0:4136:e378:8000:63bf:3fff:fdd2', /Teredo/],
	['2001:2::1', /IETF|reserved|benchmark/],
	['3fff::1', /reserved|documentation/],
	// Not an address at all (URL parsers canonicalise these; DNS never answers them)
	['127.1', /not an IP/],
	['0x7f.0.0.1', /not an IP/],
	['localhost', /not an IP/]
];

describe('addressProblem', () => {
	it.each(refused)('%s is refused (%s)', (ip, why) => {
		expect(addressProblem(ip)).toMatch(why);
		expect(isPrivateAddress(ip.replace(/^\[|\]$/g, ''))).toBe(true);
	});
	it.each([
		'93.184.216.34',
		'8.8.4.4',
		'1.1.1.1',
		'172.32.0.1',
		'100.128.0.1',
		'2606:4700::1111',
		'2a00:1450:4001::200e',
		'2001:4860:4860::8888'
	])('%s is public', (ip) => {
		expect(addressProblem(ip)).toBeNull();
		expect(isPrivateAddress(ip)).toBe(false);
	});
});

describe('URL checks', () => {
	const resolver =
		(answers: Record<string, string[]>): Resolver =>
		async (host) =>
			(answers[host] ?? []).map((address) => ({ address, family: address.includes(':') ? 6 : 4 }));

	it('refuses when any resolved address is private, and IP-literal hosts in any spelling', async () => {
		const r = resolver({ 'shop.example': ['93.184.216.34', '10.0.0.5'] });
		await expect(assertFetchableUrl(new URL('https://shop.example/p'), false, r)).rejects.toThrow(
			/10\.0\.0\.5, a private address/
		);
		// WHATWG URL canonicalises these hosts; each must still be refused.
		for (const u of [
			'http://[::ffff:7f00:1]/',
			'http://[::ffff:127.0.0.1]:8080/',
			'http://0x7f000001/',
			'http://2130706433/',
			'http://127.1/',
			'http://[64:ff9b::a9fe:a9fe]/'
		])
			await expect(assertFetchableUrl(new URL(u), false, r), u).rejects.toThrow(/refusing/);
		await expect(assertFetchableUrl(new URL('ftp://shop.example/'), false, r)).rejects.toThrow(/only http and https/);
		expect(
			await assertFetchableUrl(
				new URL('https://shop.example/p'),
				false,
				resolver({ 'shop.example': ['93.184.216.34'] })
			)
		).toEqual(['93.184.216.34']);
	});
});

describe('guardedFetch pins the checked address in the connection', () => {
	let server: Server;
	let port: number;
	beforeAll(async () => {
		server = createServer((req, res) => res.end(`hello from ${req.headers.host}`));
		await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
		port = (server.address() as AddressInfo).port;
	});
	afterAll(() => new Promise<void>((r) => server.close(() => r())));

	it('connects to the address its own lookup returned (the host name is not in DNS)', async () => {
		let lookups = 0;
		const f = guardedFetch({
			allowPrivate: true,
			resolver: async () => (lookups++, [{ address: '127.0.0.1', family: 4 }])
		});
		const res = await f(`http://shop.invalid:${port}/`);
		expect(await res.text()).toBe(`hello from shop.invalid:${port}`);
		expect(lookups).toBe(1);
	});

	it('refuses inside the connection when DNS answers a private address (rebinding after a clean check)', async () => {
		// The first answer (what a check before the fetch would have seen) is public; the
		// connection's own lookup gets loopback, as a rebinding DNS server would answer.
		const answers = ['93.184.216.34', '127.0.0.1'];
		let call = 0;
		const resolverSeq: Resolver = async () => [{ address: answers[Math.min(call++, 1)], family: 4 }];
		expect(await assertFetchableUrl(new URL(`http://shop.invalid:${port}/`), false, resolverSeq)).toEqual([
			'93.184.216.34'
		]);
		const f = guardedFetch({ allowPrivate: false, resolver: resolverSeq });
		const err = await f(`http://shop.invalid:${port}/`).then(
			() => null,
			(e: Error & { cause?: Error }) => e
		);
		expect(err, 'the fetch must fail').not.toBeNull();
		expect(String(err?.cause?.message ?? err?.message)).toMatch(/127\.0\.0\.1, a loopback address/);
	});

	it('refuses IP-literal URLs before connecting, including mapped IPv6', async () => {
		const f = guardedFetch({ allowPrivate: false });
		await expect(f(`http://127.0.0.1:${port}/`)).rejects.toThrow(/loopback/);
		await expect(f(`http://[::ffff:7f00:1]:${port}/`)).rejects.toThrow(/IPv4-mapped/);
	});
});
