/**
 * Is a listing URL safe to fetch from the server? It must be http(s), its host must be the
 * shop's own host, and every address the host resolves to must be public: no loopback,
 * private, link-local, CGNAT or other special ranges (the server could otherwise be made
 * to read internal services; the rule is `security/address.ts`, shared with the poller).
 * FEED_ALLOW_PRIVATE=true lifts the address rule, for the
 * fake shops on loopback in development and tests only.
 *
 * Pure apart from the DNS lookup, which callers may replace (tests do).
 */
import { lookup as dnsLookup } from 'node:dns/promises';
import { isIP } from 'node:net';
import { addressProblem } from '../security/address';

/** The shared address rule (also used by the poller): why an address is not public, or null. */
export { addressProblem };

export type LookupFn = (host: string) => Promise<Array<{ address: string; family: number }>>;

export interface FeedUrlOptions {
	allowPrivate?: boolean;
	lookup?: LookupFn;
}

export type FeedUrlCheck = { ok: true; url: URL; addresses: string[] } | { ok: false; reason: string };

const defaultLookup: LookupFn = (host) => dnsLookup(host, { all: true, verbatim: true });

function hostOf(u: URL) {
	return u.hostname
		.toLowerCase()
		.replace(/^\[|\]$/g, '')
		.replace(/\.$/, '');
}

/**
 * Check a listing URL against its shop's base URL and the address rules.
 * Host match is exact (port included when either names one): `shop.example` does not
 * admit `evil.shop.example.attacker.test` nor another port on the same machine.
 */
export async function checkFeedUrl(
	raw: string,
	shopBaseUrl: string,
	options: FeedUrlOptions = {}
): Promise<FeedUrlCheck> {
	let url: URL;
	try {
		url = new URL(raw);
	} catch {
		return { ok: false, reason: 'That is not a full web address (it should start with http:// or https://).' };
	}
	if (url.protocol !== 'http:' && url.protocol !== 'https:')
		return { ok: false, reason: `Only http and https addresses can be read, not ${url.protocol.replace(':', '')}.` };
	if (url.username || url.password)
		return { ok: false, reason: 'Addresses with a user name or password are not allowed.' };
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
			return {
				ok: false,
				reason: `The shop's host ${host} could not be found (${(err as { code?: string }).code ?? 'DNS error'}).`
			};
		}
		if (addresses.length === 0) return { ok: false, reason: `The shop's host ${host} has no addresses.` };
	}
	if (!options.allowPrivate) {
		for (const a of addresses) {
			const problem = addressProblem(a);
			if (problem)
				return {
					ok: false,
					reason: `${host} points to ${a}, ${problem}; only public addresses can be read from the server.`
				};
		}
	}
	return { ok: true, url, addresses };
}
