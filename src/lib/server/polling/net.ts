/**
 * Guard against fetching private addresses (SSRF): a curator types listing URLs, and the poller
 * must not be steered at the database, the metadata service or the LAN. Only where listings
 * really live on loopback (the fake shops) does FEED_ALLOW_PRIVATE=true lift it.
 */
import { lookup } from 'node:dns/promises';
import { isIP } from 'node:net';

/** True for loopback, private (RFC 1918, RFC 4193), link-local, CGNAT, unspecified and similar addresses. */
export function isPrivateAddress(ip: string): boolean {
	const v = isIP(ip);
	if (v === 4) {
		const [a, b] = ip.split('.').map(Number);
		return (
			a === 0 ||
			a === 10 ||
			a === 127 ||
			(a === 100 && b >= 64 && b <= 127) ||
			(a === 169 && b === 254) ||
			(a === 172 && b >= 16 && b <= 31) ||
			(a === 192 && b === 168) ||
			(a === 198 && (b === 18 || b === 19)) ||
			a >= 224
		);
	}
	if (v === 6) {
		const s = ip.toLowerCase();
		if (s === '::' || s === '::1') return true;
		const mapped = s.match(/^::ffff:(\d+\.\d+\.\d+\.\d+)$/);
		if (mapped) return isPrivateAddress(mapped[1]);
		return /^f[cd]/.test(s) || /^fe[89ab]/.test(s) || /^ff/.test(s);
	}
	return false;
}

/**
 * Throws when `url` is not http(s) or its host resolves to a private address (unless allowed).
 * DNS can change between this check and the connection; this blocks mistakes and casual abuse,
 * not a determined rebinding attack (that needs a pinned-address agent).
 */
export async function assertFetchable(url: URL, allowPrivate: boolean): Promise<void> {
	if (url.protocol !== 'http:' && url.protocol !== 'https:') throw new Error(`refusing ${url.protocol} URL: only http and https are polled`);
	if (allowPrivate) return;
	const host = url.hostname.replace(/^\[|\]$/g, '');
	const addresses = isIP(host) ? [host] : (await lookup(host, { all: true })).map((a) => a.address);
	const bad = addresses.find(isPrivateAddress);
	if (bad) throw new Error(`refusing ${host}: it resolves to the private address ${bad} (FEED_ALLOW_PRIVATE is off)`);
}
