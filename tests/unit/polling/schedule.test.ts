/**
 * Poll scheduling and the crawler's manners, as pure functions. Retry-After per RFC 9110 section
 * 10.2.3 (delay-seconds or HTTP-date; HTTP-date format per section 5.6.7). Backoff and jitter
 * figures are our own (common practice), from src/lib/server/polling/config.ts.
 */
import { describe, expect, it } from 'vitest';
import {
	BOT_TOKEN,
	MAX_BACKOFF_MS,
	MAX_RETRY_AFTER_MS,
	backoffDelayMs,
	isPrivateAddress,
	mergeFeedConfig,
	nextPollAfterSuccess,
	parseRetryAfter,
	userAgent
} from '../../../src/lib/server/polling';
import { isAllowed, parseRobots } from '../../../src/lib/feeds';

const MIN = 60_000;
const now = new Date('2026-02-01T12:00:00Z');

describe('backoff', () => {
	it('is interval x 2^failures with no jitter at random() = 0.5', () => {
		expect(backoffDelayMs(30, 1, () => 0.5)).toBe(60 * MIN);
		expect(backoffDelayMs(30, 2, () => 0.5)).toBe(120 * MIN);
		expect(backoffDelayMs(30, 5, () => 0.5)).toBe(960 * MIN);
	});
	it('is capped at 24 h, or at the interval when that is longer', () => {
		expect(backoffDelayMs(30, 30, () => 0.5)).toBe(MAX_BACKOFF_MS);
		expect(backoffDelayMs(7 * 24 * 60, 3, () => 0.5)).toBe(7 * 24 * 60 * MIN);
	});
	it('jitters by at most +/- 20 %', () => {
		expect(backoffDelayMs(30, 1, () => 0)).toBe(48 * MIN);
		expect(backoffDelayMs(30, 1, () => 0.999999)).toBeCloseTo(72 * MIN, -2);
	});
	it('a success waits the interval, +/- 5 %', () => {
		expect(nextPollAfterSuccess(now, 60, () => 0.5).getTime() - now.getTime()).toBe(60 * MIN);
		expect(nextPollAfterSuccess(now, 60, () => 0).getTime() - now.getTime()).toBe(57 * MIN);
	});
});

describe('Retry-After (RFC 9110 10.2.3)', () => {
	it('reads delay-seconds', () => {
		expect(parseRetryAfter('120', now)?.toISOString()).toBe('2026-02-01T12:02:00.000Z');
		expect(parseRetryAfter(' 0 ', now)?.getTime()).toBe(now.getTime());
	});
	it('reads an HTTP-date relative to the response Date header', () => {
		const serverDate = 'Wed, 21 Oct 2015 07:28:00 GMT';
		expect(parseRetryAfter('Wed, 21 Oct 2015 07:33:00 GMT', now, serverDate)?.getTime()).toBe(now.getTime() + 5 * MIN);
	});
	it('without a Date header, measures an HTTP-date against real time', () => {
		const real = Date.parse('2026-02-01T00:00:00Z');
		expect(parseRetryAfter(new Date(real + 90_000).toUTCString(), now, null, real)?.getTime()).toBe(
			now.getTime() + 90_000
		);
	});
	it('a date in the past means no wait; absurd waits are clamped; garbage is ignored', () => {
		expect(parseRetryAfter('Thu, 01 Jan 1970 00:00:00 GMT', now, 'Wed, 21 Oct 2015 07:28:00 GMT')?.getTime()).toBe(
			now.getTime()
		);
		expect(parseRetryAfter('99999999', now)?.getTime()).toBe(now.getTime() + MAX_RETRY_AFTER_MS);
		expect(parseRetryAfter('soon', now)).toBeNull();
		expect(parseRetryAfter('-5', now)).toBeNull();
		expect(parseRetryAfter(null, now)).toBeNull();
	});
});

describe('user agent', () => {
	it('carries the product token robots.txt groups match (RFC 9309 2.2.1) and an info URL', () => {
		const ua = userAgent('https://scopegrade.test/');
		expect(ua).toBe('ScopegradeBot/0.1 (+https://scopegrade.test/learn#polling)');
		expect(ua.startsWith(`${BOT_TOKEN}/`)).toBe(true);
		const rules = parseRobots('User-agent: scopegradebot\nDisallow: /private/\n\nUser-agent: *\nDisallow: /\n');
		expect(isAllowed(rules, ua, '/item/1')).toBe(true);
		expect(isAllowed(rules, ua, '/private/x')).toBe(false);
	});
});

describe('private addresses (SSRF guard)', () => {
	it.each([
		['127.0.0.1', true],
		['10.1.2.3', true],
		['172.16.0.1', true],
		['172.32.0.1', false],
		['192.168.1.1', true],
		['169.254.169.254', true], // link-local, where cloud metadata services live
		['100.64.0.1', true], // RFC 6598 shared address space
		['0.0.0.0', true],
		['8.8.8.8', false],
		['::1', true],
		['fd12::1', true], // RFC 4193 unique local
		['fe80::1', true],
		['::ffff:127.0.0.1', true],
		['2001:db8::1', true] // RFC 3849 documentation: not routable, refused like the rest
	])('%s -> %s', (ip, expected) => {
		expect(isPrivateAddress(ip)).toBe(expected);
	});
});

describe('feed config', () => {
	it("the listing's config overrides the shop's, key by key", () => {
		const shop = { selectors: { price: '.p', stock: '.s' } };
		expect(mergeFeedConfig(shop, null)).toEqual(shop);
		expect(mergeFeedConfig(shop, { selectors: { price: '.x', stock: '.y' } })).toEqual({
			selectors: { price: '.x', stock: '.y' }
		});
		expect(
			mergeFeedConfig({ apiMapping: { price: 'a', stock: 'b' } }, { selectors: { price: '.x', stock: '.y' } })
		).toEqual({
			apiMapping: { price: 'a', stock: 'b' },
			selectors: { price: '.x', stock: '.y' }
		});
		expect(mergeFeedConfig({}, {})).toEqual({});
	});
});
