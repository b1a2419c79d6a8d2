/**
 * Guard against fetching private addresses (SSRF): a curator types listing URLs, and the poller
 * must not be steered at the database, the metadata service or the LAN. Only where listings
 * really live on loopback (the fake shops) does FEED_ALLOW_PRIVATE=true lift it.
 *
 * The rules live in one place, `src/lib/server/security/address.ts`, shared with the curator's
 * test read; the poller's fetches also go through its `guardedFetch`, which checks the address
 * inside the connection's own DNS lookup (so DNS rebinding cannot swap it after the check).
 */
import { addressProblem, assertFetchableUrl } from '../security/address';

/** True for any address that is not public unicast (loopback, private, link-local, NAT64, 6to4, ...). */
export function isPrivateAddress(ip: string): boolean {
	return addressProblem(ip) !== null;
}

/** Throws when `url` is not http(s) or its host resolves to a non-public address (unless allowed). */
export async function assertFetchable(url: URL, allowPrivate: boolean): Promise<void> {
	await assertFetchableUrl(url, allowPrivate);
}
