import { describe, expect, it } from 'vitest';
import { normaliseHistory } from '../../src/lib/components/history-data';
import { etagOf, matchesEtag, toCsv } from '../../src/lib/server/queries/public-http';
import { restocksAtom, xmlEscape } from '../../src/lib/server/queries/public-feed';
import { renderMarkdown } from '../../src/lib/server/markdown';

describe('HTTP helpers', () => {
	it('compares ETags as RFC 9110 section 13.1.2 says (weak comparison, lists, *)', () => {
		const e = etagOf('{"a":1}');
		expect(matchesEtag(e, e)).toBe(true);
		expect(matchesEtag(`W/${e}`, e)).toBe(true);
		expect(matchesEtag(`"other", ${e}`, e)).toBe(true);
		expect(matchesEtag('*', e)).toBe(true);
		expect(matchesEtag('"other"', e)).toBe(false);
		expect(etagOf('{"a":2}')).not.toBe(e);
	});
	it('makes a strong ETag from the SHA-256 of the body bytes, string or encoded alike', () => {
		// FIPS 180-4 example: SHA-256("abc") = ba7816bf 8f01cfea 414140de 5dae2223 b00361a3 96177a9c
		// b410ff61 f20015ad, whose base64url (RFC 4648 section 5) starts ungWv48Bz-pBQUDeXa4iI7ADYaOWF3qctBD_YfIAFa0
		expect(etagOf('abc')).toBe('"ungWv48Bz-pBQUDeXa4iI7ADYaO"');
		expect(etagOf(new TextEncoder().encode('abc'))).toBe(etagOf('abc'));
		// UTF-8 (RFC 3629): the string is hashed as its encoded bytes
		expect(etagOf('é')).toBe(etagOf(new Uint8Array([0xc3, 0xa9])));
	});
	it('writes CSV per RFC 4180: CRLF, quoted fields with doubled quotes', () => {
		const csv = toCsv([{ a: 'plain', b: 'has, comma', c: 'say "hi"', d: null }], ['a', 'b', 'c', 'd']);
		expect(csv).toBe('a,b,c,d\r\nplain,"has, comma","say ""hi""",\r\n');
	});
});

describe('Atom feed (RFC 4287)', () => {
	it('escapes text and gives every entry an id, updated and an alternate link', () => {
		expect(xmlEscape(`<a & "b">`)).toBe('&lt;a &amp; &quot;b&quot;&gt;');
		const xml = restocksAtom(
			[
				{
					id: 7,
					at: '2026-02-01T10:00:00.000Z',
					converterSlug: 'x-box',
					converterName: 'X <Box> & Co',
					shopSlug: 's',
					shopName: 'Shop "S"',
					shopRegion: 'eu',
					priceMinor: 1290,
					currency: 'EUR',
					previousStock: 'out_of_stock',
					url: 'http://shop.test/p?a=1&b=2',
					band: 'close',
					deviationIre: 1.3,
					bandReason: null
				}
			],
			'http://example.test'
		);
		expect(xml).toContain('<feed xmlns="http://www.w3.org/2005/Atom">');
		expect(xml).toContain('<id>tag:scopegrade.test,2026:restock:7</id>');
		expect(xml).toContain('<updated>2026-02-01T10:00:00.000Z</updated>');
		expect(xml).toContain('X &lt;Box&gt; &amp; Co');
		expect(xml).toContain('href="http://shop.test/p?a=1&amp;b=2"');
		expect(xml).toContain('<link rel="alternate" type="text/html" href="http://example.test/converters/x-box"/>');
		expect(xml).not.toMatch(/<Box>/);
	});
});

describe('renderMarkdown', () => {
	it('renders markdown and strips scripts, handlers and javascript: links', () => {
		const html = renderMarkdown(
			'# Title\n\nSee [shop](https://shop.test) and [bad](javascript:alert(1)).\n\n<script>alert(1)</script><img src=x onerror=alert(1)>'
		);
		expect(html).toContain('<h2>Title</h2>');
		expect(html).toContain('<a href="https://shop.test" rel="nofollow noopener">shop</a>');
		expect(html).not.toMatch(/script|onerror|javascript:/i);
	});
});

describe('normaliseHistory', () => {
	it("reads the history route's points in time order and skips undated ones", () => {
		const pts = normaliseHistory({
			points: [
				{ at: '2026-01-02T00:00:00.000Z', priceMinor: 1290, currency: 'EUR', stock: 'in_stock' },
				{ at: '2026-01-01T00:00:00.000Z', priceMinor: null, currency: null, stock: 'out_of_stock', carried: true },
				{ at: 'not a date', priceMinor: 1, currency: 'EUR', stock: 'in_stock' }
			]
		});
		expect(pts.map((p) => [p.t, p.priceMinor, p.stock])).toEqual([
			[Date.parse('2026-01-01T00:00:00Z'), null, 'out_of_stock'],
			[Date.parse('2026-01-02T00:00:00Z'), 1290, 'in_stock']
		]);
		expect(normaliseHistory(null)).toEqual([]);
	});
});
