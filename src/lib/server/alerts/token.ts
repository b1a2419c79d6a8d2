/**
 * Unsubscribe tokens: opaque, hard to forge (RFC 8058 section 3), short enough for the
 * local part of the mailto alternative (RFC 5321 section 4.5.3.1.1: 64 octets).
 *
 *   w<watch id>.<tag>      stops one watch
 *   a<user id>.<tag>       stops every alert of one member (used by digests)
 *
 * tag = the first 16 bytes of HMAC-SHA256(AUTH_SECRET, "scopegrade-unsubscribe:" + scope + ":" + id),
 * base64url. A uuid user id travels as its 16 bytes in base64url to keep the token short.
 */
import { createHmac, timingSafeEqual } from 'node:crypto';

export type UnsubscribeScope = { kind: 'watch'; watchId: number } | { kind: 'all'; userId: string };

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function tag(secret: string, scope: UnsubscribeScope): Buffer {
	const subject = scope.kind === 'watch' ? `w:${scope.watchId}` : `a:${scope.userId}`;
	return createHmac('sha256', secret).update(`scopegrade-unsubscribe:${subject}`).digest().subarray(0, 16);
}

function requireSecret(secret: string | undefined): string {
	if (!secret || secret.length < 16)
		throw new Error('AUTH_SECRET must be set (16 characters or more) to sign unsubscribe links');
	return secret;
}

function encodeUser(userId: string): string {
	return UUID.test(userId)
		? Buffer.from(userId.replace(/-/g, ''), 'hex').toString('base64url')
		: `~${Buffer.from(userId).toString('base64url')}`;
}

function decodeUser(text: string): string | null {
	if (text.startsWith('~')) return Buffer.from(text.slice(1), 'base64url').toString('utf8') || null;
	const bytes = Buffer.from(text, 'base64url');
	if (bytes.length !== 16) return null;
	const hex = bytes.toString('hex');
	return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`;
}

/** Sign an unsubscribe token for a watch or for all of a member's alerts. */
export function signUnsubscribeToken(secret: string | undefined, scope: UnsubscribeScope): string {
	const s = requireSecret(secret);
	const head = scope.kind === 'watch' ? `w${scope.watchId}` : `a${encodeUser(scope.userId)}`;
	return `${head}.${tag(s, scope).toString('base64url')}`;
}

/** Check a token (constant-time compare of the tag); null when malformed or forged. */
export function verifyUnsubscribeToken(secret: string | undefined, token: string): UnsubscribeScope | null {
	const s = requireSecret(secret);
	if (typeof token !== 'string' || token.length > 120) return null;
	const m = /^([wa])([A-Za-z0-9_~-]+)\.([A-Za-z0-9_-]{22})$/.exec(token);
	if (!m) return null;
	let scope: UnsubscribeScope;
	if (m[1] === 'w') {
		if (!/^[1-9][0-9]{0,9}$/.test(m[2])) return null;
		scope = { kind: 'watch', watchId: Number(m[2]) };
	} else {
		const userId = decodeUser(m[2]);
		if (!userId) return null;
		scope = { kind: 'all', userId };
	}
	// Compare the text, not decoded bytes: the last base64url character carries spare bits, and
	// a token must have exactly one spelling.
	const given = Buffer.from(m[3], 'ascii');
	const expected = Buffer.from(tag(s, scope).toString('base64url'), 'ascii');
	if (given.length !== expected.length || !timingSafeEqual(given, expected)) return null;
	return scope;
}
