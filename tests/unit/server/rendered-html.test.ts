/**
 * What the app renders once and stores (src/lib/server/rendered-html.ts): catalogue cards and a
 * converter page's revision panels, Svelte's server output without its hydration markers. Parsed
 * back with cheerio (an HTML parser independent of Svelte) they must say what their data says,
 * and text from the catalogue or a curator must stay text.
 */
import { describe, expect, it } from 'vitest';
import { load } from 'cheerio';
import { render } from 'svelte/server';
import CatalogueCard from '../../../src/lib/components/CatalogueCard.svelte';
import { joinedHtml, renderCatalogueCard, renderRevisionPanels } from '../../../src/lib/server/rendered-html';
import type { CatalogueEntry, CatalogueRevision } from '../../../src/lib/finder';
import type { PageRevision } from '../../../src/lib/server/queries/public';

const revision = (id: number, code: string, band: CatalogueRevision['band']): CatalogueRevision => ({
	id,
	code,
	chip: `TST-${code}`,
	chipSlug: `tst-${code.toLowerCase()}`,
	boardMarking: '',
	band,
	score: band ? 90 : null,
	runs: band ? 2 : 0,
	retired: false,
	seenFrom: null,
	seenTo: null,
	expected: null,
	expectedBasis: null
});

const entry = (o: Partial<CatalogueEntry> = {}): CatalogueEntry => ({
	id: 1,
	slug: 'test-box',
	brand: 'Testbrand',
	model: 'Box 1',
	summary: 'A converter made up for this test.',
	hasAudioOut: true,
	power: 'usb-bus',
	outputs: ['vga', 'ypbpr'],
	lastReviewedAt: null,
	revisions: [revision(11, 'A', 'exact'), revision(12, 'B', 'poor')],
	bestBand: 'exact',
	bestScore: 90,
	expected: null,
	best: {
		listingId: 5,
		shopSlug: 'shop-t',
		shopName: 'Shop T',
		shopRegion: 'eu',
		url: 'http://shop.test/box',
		priceMinor: 1999,
		currency: 'EUR',
		displayMinor: 1999,
		displayCurrency: 'EUR',
		stock: 'in_stock',
		lastCheckedAt: null
	},
	inStockShops: 2,
	...o
});

describe('a stored catalogue card', () => {
	it('says what its entry says', () => {
		const $ = load(renderCatalogueCard(entry()));
		const card = $('li.card[data-slug="test-box"]');
		expect(card).toHaveLength(1);
		expect(card.find('h3 a').attr('href')).toBe('/converters/test-box');
		expect(card.find('h3').text().trim()).toBe('Testbrand Box 1');
		expect(card.find('[data-testid="best-price"]').text().trim()).toBe('19.99 EUR');
		expect(card.find('a[href="/compare?c=test-box"]').text()).toBe('Compare');
		expect(
			card
				.find('.rev-chip .rev-code')
				.map((_, e) => $(e).text())
				.get()
		).toEqual(['Rev A', 'Rev B']);
		expect(
			card
				.find('[data-band]')
				.map((_, e) => $(e).attr('data-band'))
				.get()
		).toEqual(['exact', 'poor']);
		expect(card.text()).toContain('Grades differ by revision');
		expect(card.find('dd').last().text().trim()).toBe('2 shops');
	});

	it('carries no hydration markers, and loses nothing else with them', () => {
		const raw = render(CatalogueCard, { props: { c: entry() } }).body;
		expect(raw).toContain('<!--'); // Svelte's markers are there to strip
		const stored = renderCatalogueCard(entry());
		expect(stored).not.toContain('<!--');
		expect(stored.length).toBeLessThan(raw.length);
		// the same document once parsed: comments were all there was between them
		expect(load(stored).html()).toBe(load(raw.replace(/<!--[^]*?-->/g, '')).html());
		expect(load(stored)('body').text()).toBe(load(raw)('body').text());
	});

	it('keeps markup and comment openers from the catalogue as text', () => {
		const hostile = entry({
			brand: '<img src=x onerror=alert(1)>',
			model: 'Box <!-- 2 -->',
			summary: '"><script>alert(1)</script>',
			best: { ...entry().best!, shopName: 'Shop "<b>"' }
		});
		const html = renderCatalogueCard(hostile);
		expect(html).not.toMatch(/<img|<script|<b>|<!--/);
		const $ = load(html);
		expect($('img, script, b')).toHaveLength(0);
		expect($('h3').text().trim()).toBe('<img src=x onerror=alert(1)> Box <!-- 2 -->');
		expect($('li.card > div p').first().text()).toBe('"><script>alert(1)</script>');
		expect($('li.card').text()).toContain('at Shop "<b>"');
	});
});

describe('stored revision panels', () => {
	// A revision not yet measured (no runs): the header, the expected grade and the history show.
	const panelRevision = (o: Partial<PageRevision> = {}): PageRevision => ({
		...revision(21, 'C', null),
		chipMaker: 'Maker T (invented)',
		chipNotes: '',
		notes: '',
		scoreMin: null,
		scoreMax: null,
		rubricVersion: null,
		gradedAt: null,
		measuredBy: [],
		gradeHistory: [],
		median: null,
		runLines: [],
		...o
	});

	it('render one panel per revision, in order, without hydration markers', () => {
		const panels = renderRevisionPanels([panelRevision(), panelRevision({ id: 22, code: 'D' })], 'Testbrand Box 1');
		expect(panels).toHaveLength(2);
		expect(panels.map((p) => load(p)('article').attr('data-revision'))).toEqual(['C', 'D']);
		expect(panels.join('')).not.toContain('<!--');
		expect(load(panels[0])('h2').text()).toMatch(/Revision C\s*· chip TST-C/);
	});

	it("keep markup in curators' text as text", () => {
		const [html] = renderRevisionPanels(
			[panelRevision({ chip: '<img src=x onerror=alert(1)>', boardMarking: '"><script>alert(1)</script>' })],
			'Box <!-- 2 -->'
		);
		expect(html).not.toMatch(/<img|<script|<!--/);
		const $ = load(html);
		expect($('img, script')).toHaveLength(0);
		expect($('h2').text()).toContain('chip <img src=x onerror=alert(1)>');
		expect($('article').text()).toContain('board marked "><script>alert(1)</script>');
	});
});

describe('fragments joined for a page', () => {
	it('give the same text as Array.prototype.join, in order, empty ones and non-ASCII included', () => {
		const fragments = ['<li>Å</li>', '', '<li>日本</li>', '<li>\u{1F4FA}</li>', '<li>4</li>'];
		expect(joinedHtml(fragments)).toBe(fragments.join(''));
		expect(joinedHtml([])).toBe('');
		const many = Array.from({ length: 48 }, (_, i) => `<li class="card" data-n="${i}">${'x'.repeat(1500)}</li>`);
		expect(joinedHtml(many)).toBe(many.join(''));
	});
});
