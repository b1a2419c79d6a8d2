/**
 * robots.txt rules. Source: RFC 9309, "Robots Exclusion Protocol" (September 2022):
 * section 2.1/2.2 (groups and rules), 2.2.1 (user-agent line), 2.2.2 (allow and disallow lines,
 * longest match, allow wins a tie, /robots.txt implicitly allowed), 2.2.3 (special characters
 * '*' and '$'), 2.3.1.3/2.3.1.4 (unavailable and unreachable status), 2.4 (caching), 2.5 (limits).
 */
import { describe, expect, it } from 'vitest';
import {
	explainAllowed,
	isAllowed,
	parseRobots,
	robotsCacheExpired,
	robotsFromFetch,
	ROBOTS_MAX_BYTES
} from '../../../src/lib/feeds';

const BOT = 'ScopegradeBot';

describe('group selection (RFC 9309 section 2.2.1)', () => {
	const robots = parseRobots(`# groups
User-agent: *
Disallow: /private/

User-agent: scopegradebot
Disallow: /bench/

User-agent: otherbot
User-agent: thirdbot
Disallow: /
`);

	it('matches the product token case-insensitively and uses only that group', () => {
		expect(isAllowed(robots, BOT, '/bench/run')).toBe(false);
		// The '*' group does not apply once a specific group matched.
		expect(isAllowed(robots, BOT, '/private/x')).toBe(true);
		expect(isAllowed(robots, 'SCOPEGRADEBOT', '/bench/run')).toBe(false);
	});

	it('falls back to the * group when no group names the crawler', () => {
		expect(isAllowed(robots, 'SomeCrawler', '/private/x')).toBe(false);
		expect(isAllowed(robots, 'SomeCrawler', '/bench/run')).toBe(true);
	});

	it('consecutive user-agent lines share one group', () => {
		expect(isAllowed(robots, 'otherbot', '/anything')).toBe(false);
		expect(isAllowed(robots, 'thirdbot', '/anything')).toBe(false);
	});

	it('several groups for the same crawler are combined', () => {
		const r = parseRobots(
			'User-agent: ScopegradeBot\nDisallow: /a/\n\nUser-agent: *\nDisallow: /c/\n\nUser-agent: scopegradebot\nDisallow: /b/\n'
		);
		expect(isAllowed(r, BOT, '/a/1')).toBe(false);
		expect(isAllowed(r, BOT, '/b/1')).toBe(false);
		expect(isAllowed(r, BOT, '/c/1')).toBe(true);
	});

	it('a matching group with no rules allows everything (it does not fall back to *)', () => {
		const r = parseRobots('User-agent: *\nDisallow: /\n\nUser-agent: scopegradebot\n');
		expect(isAllowed(r, BOT, '/x')).toBe(true);
		expect(isAllowed(r, 'nobody', '/x')).toBe(false);
	});

	it('reads the token from a full user-agent string', () => {
		const r = parseRobots('User-agent: scopegradebot\nDisallow: /x\n');
		expect(isAllowed(r, 'ScopegradeBot/0.1 (+https://scopegrade.test/bot)', '/x')).toBe(false);
	});

	it('no file rules at all allows everything', () => {
		expect(isAllowed(parseRobots(''), BOT, '/anything')).toBe(true);
	});
});

describe('rule matching (RFC 9309 section 2.2.2)', () => {
	it('the longest matching rule wins', () => {
		const r = parseRobots('User-agent: *\nAllow: /shop/\nDisallow: /shop/cart\nAllow: /shop/cart/help\n');
		expect(isAllowed(r, BOT, '/shop/item')).toBe(true);
		expect(isAllowed(r, BOT, '/shop/cart')).toBe(false);
		expect(isAllowed(r, BOT, '/shop/cart/checkout')).toBe(false);
		expect(isAllowed(r, BOT, '/shop/cart/help')).toBe(true);
	});

	it('rule order does not matter, only length', () => {
		const r = parseRobots('User-agent: *\nDisallow: /example/page/disallowed.gif\nAllow: /example/page/\n');
		expect(isAllowed(r, BOT, '/example/page/')).toBe(true);
		expect(isAllowed(r, BOT, '/example/page/disallowed.gif')).toBe(false);
	});

	it('allow wins a tie between equally long rules', () => {
		const r = parseRobots('User-agent: *\nDisallow: /page\nAllow: /page\n');
		expect(isAllowed(r, BOT, '/page')).toBe(true);
		const r2 = parseRobots('User-agent: *\nAllow: /p*\nDisallow: /pa\n');
		// Both patterns are three octets long.
		expect(isAllowed(r2, BOT, '/pa')).toBe(true);
	});

	it('an empty Disallow allows everything', () => {
		const r = parseRobots('User-agent: *\nDisallow:\n');
		expect(isAllowed(r, BOT, '/')).toBe(true);
		expect(isAllowed(r, BOT, '/cart/')).toBe(true);
	});

	it('rules are prefix matches and case-sensitive on the path', () => {
		const r = parseRobots('User-agent: *\nDisallow: /cart\n');
		expect(isAllowed(r, BOT, '/cart')).toBe(false);
		expect(isAllowed(r, BOT, '/cartography')).toBe(false);
		expect(isAllowed(r, BOT, '/Cart')).toBe(true);
	});

	it('/robots.txt itself is always allowed', () => {
		const r = parseRobots('User-agent: *\nDisallow: /\n');
		expect(isAllowed(r, BOT, '/robots.txt')).toBe(true);
		expect(isAllowed(r, BOT, '/')).toBe(false);
	});

	it('compares percent-encoded and raw characters alike', () => {
		const r = parseRobots('User-agent: *\nDisallow: /artikel/kühler\n');
		expect(isAllowed(r, BOT, '/artikel/k%C3%BChler')).toBe(false);
		expect(isAllowed(r, BOT, '/artikel/k%c3%bchler')).toBe(false);
		const r2 = parseRobots('User-agent: *\nDisallow: /%7Eteam/\n');
		expect(isAllowed(r2, BOT, '/~team/a')).toBe(false);
	});

	it('matches the query string too, and accepts full URLs', () => {
		const r = parseRobots('User-agent: *\nDisallow: /search?q=\n');
		expect(isAllowed(r, BOT, '/search?q=vga')).toBe(false);
		expect(isAllowed(r, BOT, 'http://127.0.0.1:5611/search?q=vga')).toBe(false);
		expect(isAllowed(r, BOT, '/search')).toBe(true);
	});

	it('explains the deciding rule', () => {
		const r = parseRobots('User-agent: *\nDisallow: /cart/\n');
		expect(explainAllowed(r, BOT, '/cart/1')).toMatchObject({ allowed: false, reason: 'Disallow: /cart/' });
	});
});

describe("special characters '*' and '$' (RFC 9309 section 2.2.3)", () => {
	it("'*' matches any sequence of characters", () => {
		const r = parseRobots('User-agent: *\nDisallow: /*/print\nDisallow: /*.pdf\n');
		expect(isAllowed(r, BOT, '/products/scanlet/print')).toBe(false);
		expect(isAllowed(r, BOT, '/docs/manual.pdf')).toBe(false);
		expect(isAllowed(r, BOT, '/docs/manual.pdf?dl=1')).toBe(false);
		expect(isAllowed(r, BOT, '/docs/manual.html')).toBe(true);
	});

	it("'$' anchors the end of the path", () => {
		const r = parseRobots('User-agent: *\nDisallow: /*.gif$\nAllow: /exact$\nDisallow: /exact\n');
		expect(isAllowed(r, BOT, '/img/a.gif')).toBe(false);
		expect(isAllowed(r, BOT, '/img/a.gif?x=1')).toBe(true);
		expect(isAllowed(r, BOT, '/exact')).toBe(true);
		expect(isAllowed(r, BOT, '/exact/more')).toBe(false);
	});

	it('comments, odd spacing and unknown keys are tolerated', () => {
		const r = parseRobots(
			'\uFEFFuser-AGENT :  *   # everyone\r\nCrawl-delay: 10\r\nDISALLOW: /cart/ # no carts\r\nnonsense line\r\nSitemap: http://127.0.0.1/sitemap.xml\r\n'
		);
		expect(isAllowed(r, BOT, '/cart/x')).toBe(false);
		expect(r.sitemaps).toEqual(['http://127.0.0.1/sitemap.xml']);
	});

	it('rules before any user-agent line are ignored', () => {
		const r = parseRobots('Disallow: /\nUser-agent: *\nDisallow: /cart/\n');
		expect(isAllowed(r, BOT, '/shop')).toBe(true);
	});
});

describe('fetch outcome to rules (RFC 9309 sections 2.3.1.2-2.3.1.4, 2.4, 2.5)', () => {
	it('2xx parses the body', () => {
		const r = robotsFromFetch({ status: 200, body: 'User-agent: *\nDisallow: /cart/\n' });
		expect(r.mode).toBe('parsed');
		expect(isAllowed(r, BOT, '/cart/')).toBe(false);
	});

	it.each([400, 401, 403, 404, 410, 429])('%i (unavailable) means no restrictions', (status) => {
		const r = robotsFromFetch({ status });
		expect(r.mode).toBe('allow-all');
		expect(isAllowed(r, BOT, '/anything')).toBe(true);
	});

	it.each([500, 502, 503])('%i (unreachable) means complete disallow', (status) => {
		const r = robotsFromFetch({ status });
		expect(r.mode).toBe('disallow-all');
		expect(isAllowed(r, BOT, '/anything')).toBe(false);
		expect(isAllowed(r, BOT, '/robots.txt')).toBe(true);
	});

	it('a network error means complete disallow', () => {
		const r = robotsFromFetch({ error: new Error('ECONNREFUSED') });
		expect(isAllowed(r, BOT, '/')).toBe(false);
		expect(r.reason).toMatch(/ECONNREFUSED/);
	});

	it('more than five redirects is treated as unavailable', () => {
		expect(robotsFromFetch({ status: 200, body: 'User-agent: *\nDisallow: /\n', redirects: 6 }).mode).toBe('allow-all');
		expect(robotsFromFetch({ status: 200, body: 'User-agent: *\nDisallow: /\n', redirects: 5 }).mode).toBe('parsed');
	});

	it('a cached copy expires after 24 hours', () => {
		const t = Date.UTC(2025, 0, 1);
		expect(robotsCacheExpired(t, t + 23 * 3600_000)).toBe(false);
		expect(robotsCacheExpired(t, t + 25 * 3600_000)).toBe(true);
	});

	it('parses at least 500 KiB', () => {
		const filler = '# padding\n'.repeat(Math.ceil((500 * 1024) / 10));
		const r = parseRobots(`User-agent: *\n${filler}Disallow: /late/\n`);
		expect(filler.length + 30).toBeLessThan(ROBOTS_MAX_BYTES);
		expect(isAllowed(r, BOT, '/late/x')).toBe(false);
	});
});
