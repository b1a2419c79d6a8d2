/**
 * Is a listing URL safe to fetch from the server? It must be http(s), its host must be the
 * shop's own host, and every address the host resolves to must be public: no loopback,
 * private, link-local, CGNAT or other special ranges (the server could otherwise be made
 * to read internal services). FEED_ALLOW_PRIVATE=true lifts the address rule, for the
 * fake shops on loopback in development and tests only.
 *
 * Pure apart from the DNS lookup, which callers may replace (tests do).
 */
import { lookup as dnsLookup } from 'node:dns/promises';
import { isIP } from 'node:net';

export type LookupFn = (host: string) => Promise<Array<{ address: string; family: number }>>;

export interface FeedUrlOptions {
	allowPrivate?: boolean;
	lookup?: LookupFn;
}

export type FeedUrlCheck = { ok: true; url: URL; addresses: string[] } | { ok: false; reason: string };

const defaultLookup: LookupFn = (host) => dnsLookup(host, { all: true, verbatim: true });

function ipv4ToInt(ip: string): number {
	return ip.split('.').reduce((acc, p) => (acc << 8) + Number(p), 0) >>> 0;
}

const V4_BLOCKS: Array<[string, number, string]> = [
	['0.0.0.0', 8, 'a "this network" address'],
	['10.0.0.0', 8, 'a private address'],
	['100.64.0.0', 10, 'a carrier-grade NAT address'],
	['127.0.0.0', 8, 'a loopback address'],
	['169.254.0.0', 16, 'a link-local address'],
	['172.16.0.0', 12, 'a private address'],
	['192.0.0.0', 24, 'a special-purpose address'],
	['192.0.2.0', 24, 'a documentation address'],
	['192.168.0.0', 16, 'a private address'],
	['198.18.0.0', 15, 'a benchmarking address'],
	['198.51.100.0', 24, 'a documentation address'],
	['203.0.113.0', 24, 'a documentation address'],
	['224.0.0.0', 4, 'a multicast address'],
	['240.0.0.0', 4, 'a reserved address']
];

/** Why an IPv4 address is not public, or null when it is. */
export function ipv4Problem(ip: string): string | null {
	const n = ipv4ToInt(ip);
	for (const [base, bits, what] of V4_BLOCKS) {
		const mask = bits === 0 ? 0 : (~0 << (32 - bits)) >>> 0;
		if ((n & mask) === (ipv4ToInt(base) & mask)) return what;
	}
	return null;
}

/** Expand an IPv6 address to eight 16-bit groups (handles :: and an embedded IPv4 tail). */
export function ipv6Groups(ip: string): number[] {
	let s = ip.toLowerCase().replace(/^\[|\]$/g, '').split('%')[0];
	const v4 = s.match(/(\d+\.\d+\.\d+\.\d+)$/);
	if (v4) {
		const n = ipv4ToInt(v4[1]);
		s = s.slice(0, -v4[1].length) + `${(n >>> 16).toString(16)}:${(n & 0xffff).toString(16)}`;
	}
	const [head, tail] = s.split('::');
	const h = head ? head.split(':') : [];
	const tl = tail !== undefined && tail !== '' ? tail.split(':') : [];
	const fill = s.includes('::') ? 8 - h.length - tl.length : 0;
	return [...h, ...Array(fill).fill('0'), ...tl].map((g) => parseInt(g || '0', 16));
}

/** Why an IPv6 address is not public, or null when it is. */
export function ipv6Problem(ip: string): string | null {
	const g = ipv6Groups(ip);
	if (g.every((x) => x === 0)) return 'the unspecified address';
	if (g.slice(0, 7).every((x) => x === 0) && g[7] === 1) return 'a loopback address';
	// IPv4-mapped (::ffff:a.b.c.d) and IPv4-compatible forms: judge the IPv4 inside.
	if (g.slice(0, 5).every((x) => x === 0) && (g[5] === 0xffff || g[5] === 0)) {
		const v4 = `${g[6] >> 8}.${g[6] & 255}.${g[7] >> 8}.${g[7] & 255}`;
		return ipv4Problem(v4);
	}
	if (g[0] === 0x64 && g[1] === 0xff9b) return ipv4Problem(`${g[6] >> 8}.${g[6] & 255}.${g[7] >> 8}.${g[7] & 255}`); // NAT64
	if ((g[0] & 0xfe00) === 0xfc00) return 'a private (unique local) address';
	if ((g[0] & 0xffc0) === 0xfe80) return 'a link-local address';
	if ((g[0] & 0xffc0) === 0xfec0) return 'a site-local address';
	if ((g[0] & 0xff00) === 0xff00) return 'a multicast address';
	if (g[0] === 0x2001 && g[1] === 0x0db8) return 'a documentation address';
	return null;
}

/** Why an address (v4 or v6) is not public, or null. */
export function addressProblem(ip: string): string | null {
	const v = isIP(ip);
	if (v === 4) return ipv4Problem(ip);
	if (v === 6) return ipv6Problem(ip);
	return 'not an IP address';
}

function hostOf(u: URL) {
	return u.hostname.toLowerCase().replace(/^\[|\]$/g, '').replace(/\.$/, '');
}

/**
 * Check a listing URL against its shop's base URL and the address rules.
 * Host match is exact (port included when either names one): `shop.example` does not
 * admit `evil.shop.example.attacker.test` nor another port on the same machine.
 */
export async function checkFeedUrl(raw: string, shopBaseUrl: string, options: FeedUrlOptions = {}): Promise<FeedUrlCheck> {
	let url: URL;
	try {
		url = new URL(raw);
	} catch {
		return { ok: false, reason: 'That is not a full web address (it should start with http:// or https://).' };
	}
	if (url.protocol !== 'http:' && url.protocol !== 'https:')
		return { ok: false, reason: `Only http and https addresses can be read, not ${url.protocol.replace(':', '')}.` };
	if (url.username || url.password) return { ok: false, reason: 'Addresses with a user name or password are not allowed.' };
	let base: URL;
	try {
		base = new URL(shopBaseUrl);
	} catch {
		return { ok: false, reason: 'The shop has no valid base URL; an admin must fix it first.' };
	}
	if (hostOf(url) !== hostOf(base) || url.port !== base.port)
		return { ok: false, reason: `The address must be on the shop's own site (${base.host}), not ${url.host}.` };

	const host = hostOf(url);
	let addresses: string[];
	if (isIP(host)) addresses = [host];
	else {
		try {
			addresses = (await (options.lookup ?? defaultLookup)(host)).map((a) => a.address);
		} catch (err) {
			return { ok: false, reason: `The shop's host ${host} could not be found (${(err as { code?: string }).code ?? 'DNS error'}).` };
		}
		if (addresses.length === 0) return { ok: false, reason: `The shop's host ${host} has no addresses.` };
	}
	if (!options.allowPrivate) {
		for (const a of addresses) {
			const problem = addressProblem(a);
			if (problem)
				return { ok: false, reason: `${host} points to ${a}, ${problem}; only public addresses can be read from the server.` };
		}
	}
	return { ok: true, url, addresses };
}
