/**
 * extractOffer on each format, including the failure cases the poller must never record as a
 * price or stock change. Sources: schema.org 30.0 Product, Offer (price, priceCurrency,
 * availability) and ItemAvailability; W3C JSON-LD 1.1, "Embedding JSON-LD in HTML Documents"
 * (<script type="application/ld+json">); HTML Living Standard, "Microdata" section (itemscope,
 * itemtype, itemprop, and the property value rules for meta/link/other elements); ISO 4217
 * minor units (JPY 0). Selector and API layouts are the demo scenario's own.
 */
import { describe, expect, it } from 'vitest';
import { extractOffer, getPath, type ApiMapping } from '../../../src/lib/feeds';

const doc = (head: string, body: string) =>
	`<!doctype html><html><head><title>t</title>${head}</head><body>${body}</body></html>`;
const ld = (obj: unknown) => `<script type="application/ld+json">${JSON.stringify(obj)}</script>`;

const product = {
	'@context': 'https://schema.org',
	'@type': 'Product',
	name: 'Vantacove Beam Bridge',
	offers: { '@type': 'Offer', price: '24.99', priceCurrency: 'USD', availability: 'https://schema.org/InStock' }
};

describe('JSON-LD (W3C JSON-LD 1.1 embedding; schema.org 30.0 Offer)', () => {
	it('reads price, currency, availability and name', () => {
		const r = extractOffer({ body: doc(ld(product), '<h1>x</h1>'), format: 'jsonld', expectedCurrency: 'USD' });
		expect(r).toMatchObject({
			ok: true,
			priceMinor: 2499,
			currency: 'USD',
			stock: 'in_stock',
			title: 'Vantacove Beam Bridge',
			via: 'jsonld'
		});
	});

	it('finds the Product inside @graph and a numeric price', () => {
		const graph = {
			'@context': 'https://schema.org',
			'@graph': [
				{ '@type': 'WebPage', name: 'page' },
				{
					...product,
					offers: [
						{ '@type': 'Offer', price: 39.5, priceCurrency: 'USD', availability: 'http://schema.org/OutOfStock' }
					]
				}
			]
		};
		expect(extractOffer({ body: doc(ld(graph), ''), format: 'jsonld' })).toMatchObject({
			ok: true,
			priceMinor: 3950,
			stock: 'out_of_stock'
		});
	});

	it('reads an AggregateOffer lowPrice and a priceSpecification', () => {
		const agg = {
			...product,
			offers: { '@type': 'AggregateOffer', lowPrice: '18.99', priceCurrency: 'USD', availability: 'InStock' }
		};
		expect(extractOffer({ body: doc(ld(agg), ''), format: 'jsonld' })).toMatchObject({ ok: true, priceMinor: 1899 });
		const spec = {
			...product,
			offers: {
				'@type': 'Offer',
				availability: 'PreOrder',
				priceSpecification: { '@type': 'UnitPriceSpecification', price: 12.5, priceCurrency: 'USD' }
			}
		};
		expect(extractOffer({ body: doc(ld(spec), ''), format: 'jsonld' })).toMatchObject({
			ok: true,
			priceMinor: 1250,
			stock: 'preorder'
		});
	});

	it('skips an unrelated or broken block when another holds the Product', () => {
		const body = doc(
			'<script type="application/ld+json">{"@type": "Organization", </script>' +
				ld({ '@type': 'BreadcrumbList' }) +
				ld(product),
			''
		);
		expect(extractOffer({ body, format: 'jsonld' })).toMatchObject({ ok: true, priceMinor: 2499 });
	});

	it('a Product without a price is a no-price failure; a priced one beside it still wins', () => {
		const bare = { '@context': 'https://schema.org', '@type': 'Product', name: 'Related item' };
		expect(extractOffer({ body: doc(ld(bare), ''), format: 'jsonld' })).toMatchObject({
			ok: false,
			kind: 'no-price',
			reason: 'no price found: the JSON-LD Product has no Offer with a price'
		});
		expect(extractOffer({ body: doc(ld([bare, product]), ''), format: 'jsonld' })).toMatchObject({
			ok: true,
			priceMinor: 2499,
			title: 'Vantacove Beam Bridge'
		});
	});

	it("missing priceCurrency is read in the listing's configured currency, with a note", () => {
		const p = { ...product, offers: { '@type': 'Offer', price: '24.99', availability: 'https://schema.org/InStock' } };
		const r = extractOffer({ body: doc(ld(p), ''), format: 'jsonld', expectedCurrency: 'USD' });
		expect(r).toMatchObject({ ok: true, priceMinor: 2499, currency: 'USD' });
		if (r.ok) expect(r.notes.join(' ')).toMatch(/configured currency USD/);
	});

	it('missing priceCurrency with no configured currency is a no-currency failure, not a guess', () => {
		const p = { ...product, offers: { '@type': 'Offer', price: '24.99', availability: 'https://schema.org/InStock' } };
		expect(extractOffer({ body: doc(ld(p), ''), format: 'jsonld' })).toMatchObject({
			ok: false,
			kind: 'no-currency',
			stock: 'unknown'
		});
	});

	it('a currency other than the listing currency is wrong-currency', () => {
		const p = { ...product, offers: { ...product.offers, priceCurrency: 'EUR' } };
		const r = extractOffer({ body: doc(ld(p), ''), format: 'jsonld', expectedCurrency: 'USD' });
		expect(r).toMatchObject({ ok: false, kind: 'wrong-currency' });
		if (!r.ok) expect(r.reason).toMatch(/EUR.*USD/);
	});

	it('unknown availability wording keeps the price and says stock unknown', () => {
		const p = { ...product, offers: { ...product.offers, availability: 'Ask in store' } };
		const r = extractOffer({ body: doc(ld(p), ''), format: 'jsonld' });
		expect(r).toMatchObject({ ok: true, priceMinor: 2499, stock: 'unknown' });
		if (r.ok) expect(r.notes.join(' ')).toMatch(/not recognised/);
	});

	it('changed markup (no structured data left) fails with a reason', () => {
		const r = extractOffer({
			body: doc('', '<div class="pdp-cost">USD 24.99</div>'),
			format: 'jsonld',
			expectedCurrency: 'USD'
		});
		expect(r).toMatchObject({ ok: false, kind: 'no-price', stock: 'unknown' });
		if (!r.ok) expect(r.reason).toMatch(/no JSON-LD/);
	});

	it('a zero price is a failure, never a free product', () => {
		const p = { ...product, offers: { ...product.offers, price: '0.00' } };
		expect(extractOffer({ body: doc(ld(p), ''), format: 'jsonld' })).toMatchObject({ ok: false, kind: 'parse' });
	});

	it('a truncated document is unreadable even if its head was intact', () => {
		const full = doc(ld(product), '<main><p>In stock</p></main>');
		const r = extractOffer({ body: full.slice(0, full.indexOf('<main>') + 10), format: 'jsonld' });
		expect(r).toMatchObject({ ok: false, kind: 'unreadable' });
		if (!r.ok) expect(r.reason).toMatch(/truncated/);
		const cutInJson = full.slice(0, full.indexOf('"priceCurrency"'));
		expect(extractOffer({ body: cutInJson, format: 'jsonld' })).toMatchObject({ ok: false, kind: 'unreadable' });
	});
});

const micro = (offerInner: string, extra = '') =>
	doc(
		'',
		`<div itemscope itemtype="https://schema.org/Product">
<h1 itemprop="name">Tessaloop Loop RGB</h1>
<div itemprop="brand" itemscope itemtype="https://schema.org/Brand"><span itemprop="name">Tessaloop</span></div>
${extra}
<div itemprop="offers" itemscope itemtype="https://schema.org/Offer">${offerInner}</div>
</div>`
	);

describe('microdata (HTML Living Standard, Microdata; schema.org 30.0 Offer)', () => {
	const offer =
		'<span itemprop="priceCurrency" content="GBP">£</span><span itemprop="price" content="15.95">15.95</span><link itemprop="availability" href="https://schema.org/InStock">';

	it('reads price from content, availability from link href, and the product name (not the brand name)', () => {
		const r = extractOffer({ body: micro(offer), format: 'microdata', expectedCurrency: 'GBP' });
		expect(r).toMatchObject({
			ok: true,
			priceMinor: 1595,
			currency: 'GBP',
			stock: 'in_stock',
			title: 'Tessaloop Loop RGB',
			via: 'microdata'
		});
	});

	it('reads meta elements and element text too', () => {
		const r = extractOffer({
			body: micro(
				'<meta itemprop="priceCurrency" content="GBP"><span itemprop="price">34.00</span><meta itemprop="availability" content="https://schema.org/SoldOut">'
			),
			format: 'microdata'
		});
		expect(r).toMatchObject({ ok: true, priceMinor: 3400, stock: 'out_of_stock' });
	});

	it('missing priceCurrency is read in the configured currency', () => {
		const r = extractOffer({
			body: micro('<span itemprop="price" content="15.95">15.95</span>'),
			format: 'microdata',
			expectedCurrency: 'GBP'
		});
		expect(r).toMatchObject({ ok: true, priceMinor: 1595, currency: 'GBP' });
	});

	it('changed markup (no itemscope) fails with a reason', () => {
		const r = extractOffer({
			body: doc('', '<div class="item-card"><span class="item-price">£15.95</span></div>'),
			format: 'microdata',
			expectedCurrency: 'GBP'
		});
		expect(r).toMatchObject({ ok: false, kind: 'no-price' });
		if (!r.ok) expect(r.reason).toMatch(/microdata/);
	});

	it('when JSON-LD is present as well it is read first, with a note', () => {
		const body = doc(ld({ ...product, offers: { ...product.offers, priceCurrency: 'GBP', price: '15.95' } }), '');
		const r = extractOffer({ body, format: 'microdata', expectedCurrency: 'GBP' });
		expect(r).toMatchObject({ ok: true, via: 'jsonld', priceMinor: 1595 });
		if (r.ok) expect(r.notes[0]).toMatch(/expects microdata/);
	});
});

describe("CSS selectors (the demo shops' curator settings)", () => {
	const kanal = { price: '.artikel .preis', stock: '.artikel .lager', title: '.artikel h1' };
	const kanalPage = (price: string, stock: string) =>
		doc(
			'',
			`<div class="artikel"><h1>Vantacove Beam Bridge Pro</h1><p class="preis">${price}</p><p class="lager">${stock}</p></div>`
		);

	it('reads a locale price "1.234,56 €" and German stock words', () => {
		expect(
			extractOffer({
				body: kanalPage('1.234,56\u00a0€', 'Vorbestellbar'),
				format: 'selectors',
				selectors: kanal,
				expectedCurrency: 'EUR'
			})
		).toMatchObject({
			ok: true,
			priceMinor: 123456,
			currency: 'EUR',
			stock: 'preorder',
			title: 'Vantacove Beam Bridge Pro',
			via: 'selectors'
		});
		expect(
			extractOffer({
				body: kanalPage('22,90 €', 'Lieferbar in 2-3 Wochen'),
				format: 'selectors',
				selectors: kanal,
				expectedCurrency: 'EUR'
			})
		).toMatchObject({ ok: true, priceMinor: 2290, stock: 'backorder' });
	});

	it('changed markup: the reason names the selector that matched nothing', () => {
		const r = extractOffer({
			body: doc('', '<section class="produkt"><span class="betrag">22,90 €</span></section>'),
			format: 'selectors',
			selectors: kanal,
			expectedCurrency: 'EUR'
		});
		expect(r).toMatchObject({
			ok: false,
			kind: 'no-price',
			stock: 'unknown',
			reason: 'no price found: selector ".artikel .preis" matched nothing'
		});
	});

	it("a price without a symbol and no currency selector is read in the listing's currency", () => {
		const r = extractOffer({
			body: kanalPage('22,90', 'Auf Lager'),
			format: 'selectors',
			selectors: kanal,
			expectedCurrency: 'EUR'
		});
		expect(r).toMatchObject({ ok: true, priceMinor: 2290, currency: 'EUR' });
		if (r.ok) expect(r.notes.join(' ')).toMatch(/no currency shown/);
	});

	it('"$" on a euro listing is wrong-currency', () => {
		expect(
			extractOffer({
				body: kanalPage('22,90 $', 'Auf Lager'),
				format: 'selectors',
				selectors: kanal,
				expectedCurrency: 'EUR'
			})
		).toMatchObject({ ok: false, kind: 'wrong-currency' });
	});

	it('unreadable price text is a parse failure', () => {
		expect(
			extractOffer({
				body: kanalPage('Preis auf Anfrage €', 'Auf Lager'),
				format: 'selectors',
				selectors: kanal,
				expectedCurrency: 'EUR'
			})
		).toMatchObject({ ok: false, kind: 'parse' });
	});

	const wattle = {
		price: '#buy-box [data-price]',
		stock: '#buy-box .availability',
		currency: '#buy-box [data-currency]',
		title: 'h1.product-title'
	};
	const wattlePage = (cur: string, stock: string) =>
		doc(
			'',
			`<h1 class="product-title">Brisling Labs Scanlet</h1><div id="buy-box"><p>$<span data-price>21.95</span>${cur}</p><p class="availability">${stock}</p></div>`
		);

	it('reads a separate currency element', () => {
		expect(
			extractOffer({
				body: wattlePage(' <span data-currency>AUD</span>', 'In stock'),
				format: 'selectors',
				selectors: wattle,
				expectedCurrency: 'AUD'
			})
		).toMatchObject({ ok: true, priceMinor: 2195, currency: 'AUD', stock: 'in_stock', title: 'Brisling Labs Scanlet' });
		expect(
			extractOffer({
				body: wattlePage(' <span data-currency>AUD</span>', 'Sold out – back soon'),
				format: 'selectors',
				selectors: wattle,
				expectedCurrency: 'AUD'
			})
		).toMatchObject({ ok: true, stock: 'out_of_stock' });
	});

	it('a missing currency element is no-currency', () => {
		const r = extractOffer({
			body: wattlePage('', 'In stock'),
			format: 'selectors',
			selectors: wattle,
			expectedCurrency: 'AUD'
		});
		expect(r).toMatchObject({ ok: false, kind: 'no-currency' });
		if (!r.ok) expect(r.reason).toContain('#buy-box [data-currency]');
	});

	it('a missing stock element leaves stock unknown, with a note', () => {
		const r = extractOffer({
			body: doc('', '<div id="buy-box"><span data-price>21.95</span><span data-currency>AUD</span></div>'),
			format: 'selectors',
			selectors: wattle,
			expectedCurrency: 'AUD'
		});
		expect(r).toMatchObject({ ok: true, stock: 'unknown' });
	});

	it('no selectors configured is a clear failure', () => {
		expect(extractOffer({ body: doc('', '<p>x</p>'), format: 'selectors' })).toMatchObject({
			ok: false,
			kind: 'no-price'
		});
	});

	it('an invalid selector is reported, not thrown', () => {
		const r = extractOffer({
			body: doc('', '<p>x</p>'),
			format: 'selectors',
			selectors: { price: '.a[', stock: '.b' }
		});
		expect(r).toMatchObject({ ok: false });
		if (!r.ok) expect(r.reason).toMatch(/selector/);
	});
});

describe('JSON API (dot-path mapping; ISO 4217 JPY exponent 0)', () => {
	const mapping: ApiMapping = {
		price: 'price_yen',
		currency: 'currency',
		stock: 'stock.status',
		stockValues: { available: 'in_stock', none: 'out_of_stock', backorder: 'backorder' },
		title: 'name'
	};
	const api = (extra: Record<string, unknown> = {}) =>
		JSON.stringify({
			sku: 'KP-1001',
			name: 'Vantacove Beam Bridge',
			price_yen: 3480,
			currency: 'JPY',
			stock: { status: 'available' },
			...extra
		});

	it('reads integer yen as 3480 minor units', () => {
		expect(
			extractOffer({
				body: api(),
				contentType: 'application/json',
				format: 'api',
				apiMapping: mapping,
				expectedCurrency: 'JPY'
			})
		).toMatchObject({
			ok: true,
			priceMinor: 3480,
			currency: 'JPY',
			stock: 'in_stock',
			title: 'Vantacove Beam Bridge',
			via: 'api'
		});
	});

	it("maps the shop's own stock codes", () => {
		expect(
			extractOffer({ body: api({ stock: { status: 'none' } }), format: 'api', apiMapping: mapping })
		).toMatchObject({ ok: true, stock: 'out_of_stock' });
		expect(
			extractOffer({ body: api({ stock: { status: 'BACKORDER' } }), format: 'api', apiMapping: mapping })
		).toMatchObject({ ok: true, stock: 'backorder' });
		expect(
			extractOffer({ body: api({ stock: { status: 'mystery' } }), format: 'api', apiMapping: mapping })
		).toMatchObject({ ok: true, stock: 'unknown' });
	});

	it('fixedCurrency applies when the document has no currency; priceScale minor divides by the exponent', () => {
		const m: ApiMapping = { price: 'p', fixedCurrency: 'EUR', stock: 's', priceScale: 'minor' };
		expect(extractOffer({ body: '{"p": 2290, "s": "in stock"}', format: 'api', apiMapping: m })).toMatchObject({
			ok: true,
			priceMinor: 2290,
			currency: 'EUR',
			stock: 'in_stock'
		});
		expect(
			extractOffer({ body: '{"p": 3480, "s": true}', format: 'api', apiMapping: { ...m, fixedCurrency: 'JPY' } })
		).toMatchObject({ ok: true, priceMinor: 3480, currency: 'JPY' });
	});

	it('missing currency field is no-currency', () => {
		const body = JSON.stringify({ price_yen: 3480, stock: { status: 'available' } });
		expect(extractOffer({ body, format: 'api', apiMapping: mapping, expectedCurrency: 'JPY' })).toMatchObject({
			ok: false,
			kind: 'no-currency'
		});
	});

	it('wrong currency is wrong-currency', () => {
		expect(
			extractOffer({ body: api({ currency: 'USD' }), format: 'api', apiMapping: mapping, expectedCurrency: 'JPY' })
		).toMatchObject({ ok: false, kind: 'wrong-currency' });
	});

	it('a changed document shape names the missing path', () => {
		const r = extractOffer({
			body: JSON.stringify({ item: { pricing: { amount: 3480 } } }),
			format: 'api',
			apiMapping: mapping
		});
		expect(r).toMatchObject({
			ok: false,
			kind: 'no-price',
			reason: 'no price found: path "price_yen" is missing from the document'
		});
	});

	it('a truncated body is unreadable', () => {
		const body = api();
		expect(extractOffer({ body: body.slice(0, 40), format: 'api', apiMapping: mapping })).toMatchObject({
			ok: false,
			kind: 'unreadable',
			stock: 'unknown'
		});
	});

	it('an HTML error page instead of JSON is unreadable', () => {
		expect(
			extractOffer({
				body: '<html><body>Oops</body></html>',
				contentType: 'text/html',
				format: 'api',
				apiMapping: mapping
			})
		).toMatchObject({ ok: false, kind: 'unreadable' });
	});

	it('getPath reads dots and indexes', () => {
		expect(getPath({ a: [{ b: 1 }] }, 'a.0.b')).toBe(1);
		expect(getPath({ a: [{ b: 1 }] }, 'a[0].b')).toBe(1);
		expect(getPath({ a: 1 }, 'a.b.c')).toBeUndefined();
	});
});
