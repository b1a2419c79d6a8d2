/**
 * The one server-side address check (SSRF guard), shared by the poller (page, every redirect
 * hop, robots.txt) and the curator's test read. A host may be fetched only when every address
 * it resolves to is public unicast: no loopback, private, link-local, CGNAT, multicast,
 * documentation, benchmarking or other special-use range (IANA IPv4 and IPv6 Special-Purpose
 * Address Registries, RFC 6890), and no IPv6 form that embeds an IPv4 address (IPv4-mapped in
 * any spelling, IPv4-compatible, NAT64 64:ff9b::/96 and 64:ff9b:1::/48, 6to4, Teredo).
 *
 * Parsing and range tables come from ipaddr.js. The check runs inside the connection's own DNS
 * lookup (`guardedFetch`), so the address that was checked is the address connected to: a
 * second DNS answer (rebinding) cannot slip in between check and connect.
 */
import { lookup as dnsLookup, type LookupAddress } from 'node:dns';
import { isIP } from 'node:net';
import ipaddr from 'ipaddr.js';
import { Agent, fetch as undiciFetch } from 'undici';

const V6_GLOBAL_UNICAST = ipaddr.IPv6.parseCIDR('2000::/3');
/** IETF protocol assignments (RFC 2928): Teredo, ORCHIDv2, benchmarking and more live here. */
const V6_IETF_PROTOCOL = ipaddr.IPv6.parseCIDR('2001::/23');

const RANGE_WORDS: Record<string, string> = {
	unspecified: 'an unspecified ("this network") address',
	loopback: 'a loopback address',
	private: 'a private address',
	uniqueLocal: 'a private (unique local) address',
	linkLocal: 'a link-local address',
	carrierGradeNat: 'a carrier-grade NAT address',
	multicast: 'a multicast address',
	broadcast: 'the broadcast address',
	reserved: 'a reserved, documentation or benchmarking address',
	ipv4Mapped: 'an IPv4-mapped address',
	rfc6145: 'an IPv4-translated address',
	rfc6052: 'a NAT64 address (it embeds an IPv4 address)',
	'6to4': 'a 6to4 address (it embeds an IPv4 address)',
	teredo: 'a Teredo address (it embeds an IPv4 address)',
	deprecatedSiteLocal: 'a site-local address',
	discard: 'a discard-only address'
};

/** Why `ip` is not a public address, or null when it is one. */
export function addressProblem(ip: string): string | null {
	const bare = ip.replace(/^\[|\]$/g, '');
	if (!ipaddr.isValid(bare) || !isIP(bare.split('%')[0])) return 'not an IP address';
	let addr: ipaddr.IPv4 | ipaddr.IPv6;
	try {
		addr = ipaddr.parse(bare.split('%')[0]);
	} catch {
		return 'not an IP address';
	}
	if (addr.kind() === 'ipv6') {
		const v6 = addr as ipaddr.IPv6;
		// ::ffff:a.b.c.d in any spelling: judge the IPv4 inside, and refuse it regardless,
		// since a public IPv4 is reachable by its own name.
		if (v6.isIPv4MappedAddress()) {
			const inner = addressProblem(v6.toIPv4Address().toString());
			return inner ? `an IPv4-mapped form of ${inner}` : 'an IPv4-mapped address (use the IPv4 address itself)';
		}
		const range = v6.range();
		if (range !== 'unicast') return RANGE_WORDS[range] ?? `a special-use address (${range})`;
		if (!v6.match(V6_GLOBAL_UNICAST)) return 'outside IPv6 global unicast (2000::/3), e.g. IPv4-compatible ::a.b.c.d';
		if (v6.match(V6_IETF_PROTOCOL)) return 'an IETF protocol-assignment address (2001::/23)';
		return null;
	}
	const range = addr.range();
	return range === 'unicast' ? null : (RANGE_WORDS[range] ?? `a special-use address (${range})`);
}

export function isPublicAddress(ip: string): boolean {
	return addressProblem(ip) === null;
}

export class AddressRefused extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'AddressRefused';
	}
}

/** Refuse with a message naming the host and the address, or pass. */
export function assertPublicAddress(host: string, address: string): void {
	const problem = addressProblem(address);
	if (problem)
		throw new AddressRefused(
			`refusing ${host}: it resolves to ${address}, ${problem} (only public addresses are fetched)`
		);
}

export type Resolver = (host: string) => Promise<LookupAddress[]>;

const systemResolver: Resolver = (host) =>
	new Promise((resolve, reject) =>
		dnsLookup(host, { all: true, verbatim: true }, (err, addresses) => (err ? reject(err) : resolve(addresses)))
	);

type LookupCallback = (err: NodeJS.ErrnoException | null, address: string | LookupAddress[], family?: number) => void;

/**
 * A `net.connect` lookup that resolves the host, refuses when any answer is not public
 * (unless `allowPrivate`), and hands the connection exactly the addresses it checked.
 */
export function checkedLookup(allowPrivate: boolean, resolver: Resolver = systemResolver) {
	return (
		hostname: string,
		options: { all?: boolean; family?: number | string } | undefined,
		callback: LookupCallback
	) => {
		resolver(hostname).then(
			(addresses) => {
				try {
					if (addresses.length === 0) throw new AddressRefused(`${hostname} has no addresses`);
					if (!allowPrivate) for (const a of addresses) assertPublicAddress(hostname, a.address);
				} catch (err) {
					callback(err as NodeJS.ErrnoException, '', 0);
					return;
				}
				const family =
					options?.family === 6 || options?.family === 'IPv6'
						? 6
						: options?.family === 4 || options?.family === 'IPv4'
							? 4
							: 0;
				const usable = family ? addresses.filter((a) => a.family === family) : addresses;
				if (options?.all) callback(null, usable);
				else if (usable[0]) callback(null, usable[0].address, usable[0].family);
				else
					callback(Object.assign(new Error(`${hostname} has no IPv${family} address`), { code: 'ENOTFOUND' }), '', 0);
			},
			(err) => callback(err, '', 0)
		);
	};
}

export interface GuardedFetchOptions {
	allowPrivate: boolean;
	/** Replaces system DNS (tests). */
	resolver?: Resolver;
}

/**
 * `fetch` whose connections go only to checked addresses. An IP-literal URL is checked
 * before the request (no DNS lookup happens for it); a host name is checked inside the
 * connection's lookup. Throws AddressRefused (wrapped by fetch as its `cause`) when refused.
 */
export function guardedFetch(options: GuardedFetchOptions): typeof fetch {
	const dispatcher = new Agent({ connect: { lookup: checkedLookup(options.allowPrivate, options.resolver) } });
	return (async (input: string | URL | Request, init?: RequestInit) => {
		const url = new URL(input instanceof Request ? input.url : String(input));
		if (url.protocol !== 'http:' && url.protocol !== 'https:')
			throw new AddressRefused(`refusing ${url.protocol} URL: only http and https are fetched`);
		const host = url.hostname.replace(/^\[|\]$/g, '');
		if (!options.allowPrivate && isIP(host)) assertPublicAddress(host, host);
		return undiciFetch(url, { ...(init as object), dispatcher } as Parameters<
			typeof undiciFetch
		>[1]) as unknown as Response;
	}) as typeof fetch;
}

let shared: { allowPrivate: boolean; fetch: typeof fetch } | null = null;
/** One guarded fetch per process and mode, so its connection pool is shared. */
export function sharedGuardedFetch(allowPrivate: boolean): typeof fetch {
	if (!shared || shared.allowPrivate !== allowPrivate) shared = { allowPrivate, fetch: guardedFetch({ allowPrivate }) };
	return shared.fetch;
}

/**
 * The URL-level check done before a hop: http(s) only, and (unless allowed) every address
 * the host resolves to is public. The connection itself is checked again by `guardedFetch`.
 */
export async function assertFetchableUrl(
	url: URL,
	allowPrivate: boolean,
	resolver: Resolver = systemResolver
): Promise<string[]> {
	if (url.protocol !== 'http:' && url.protocol !== 'https:')
		throw new AddressRefused(`refusing ${url.protocol} URL: only http and https are fetched`);
	const host = url.hostname.replace(/^\[|\]$/g, '').replace(/\.$/, '');
	const addresses = isIP(host) ? [host] : (await resolver(host)).map((a) => a.address);
	if (addresses.length === 0) throw new AddressRefused(`${host} has no addresses`);
	if (!allowPrivate) for (const a of addresses) assertPublicAddress(host, a);
	return addresses;
}
