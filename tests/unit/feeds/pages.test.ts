/**
 * Extractor fixes, each on a fixture page written for it (invented shops and products):
 * "CA$" is the Canadian dollar (ISO 4217 CAD), a bare amount is read in the listing's configured
 * currency with a note, a symbol of another currency stays a wrong-currency failure, and a page that
 * says the product is discontinued but shows no price is read as discontinued (schema.org
 * ItemAvailability "Discontinued", or the shop's own words), not as a failed read.
 */
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { extractOffer } from '../../../src/lib/feeds';

const page = (name: string) => readFileSync(resolve(__dirname, 'pages', name), 'utf8');
const selectors = { price: '.buy .price-now', stock: '.buy .stock-line', title: 'h1.product-name' };

describe('fixture pages', () => {
	it('reads CA$ as Canadian dollars', () => {
		const r = extractOffer({
			body: page('canadian-dollars.html'),
			format: 'selectors',
			selectors,
			expectedCurrency: 'CAD'
		});
		expect(r).toMatchObject({ ok: true, priceMinor: 12900, currency: 'CAD', stock: 'in_stock' });
		// The same page on a listing configured for Australian dollars is a wrong currency, not a silent AUD price.
		expect(
			extractOffer({ body: page('canadian-dollars.html'), format: 'selectors', selectors, expectedCurrency: 'AUD' })
		).toMatchObject({ ok: false, kind: 'wrong-currency' });
	});

	it('reads a bare amount in the configured currency and says so', () => {
		const r = extractOffer({ body: page('bare-amount.html'), format: 'jsonld', expectedCurrency: 'EUR' });
		expect(r).toMatchObject({ ok: true, priceMinor: 3490, currency: 'EUR', stock: 'in_stock' });
		if (r.ok)
			expect(r.notes).toContain("no currency shown with the price; read in the listing's configured currency EUR");
		// Without a configured currency nothing is guessed.
		expect(extractOffer({ body: page('bare-amount.html'), format: 'jsonld' })).toMatchObject({
			ok: false,
			kind: 'no-currency'
		});
	});

	it('keeps a foreign symbol a wrong-currency failure', () => {
		const r = extractOffer({
			body: page('foreign-symbol.html'),
			format: 'selectors',
			selectors,
			expectedCurrency: 'EUR'
		});
		expect(r).toMatchObject({ ok: false, kind: 'wrong-currency', stock: 'unknown' });
		if (!r.ok) expect(r.reason).toMatch(/GBP.*EUR/);
	});

	it('reads a discontinued page without a price as discontinued, from JSON-LD', () => {
		const r = extractOffer({ body: page('discontinued-no-price.html'), format: 'jsonld', expectedCurrency: 'CAD' });
		expect(r).toMatchObject({ ok: true, priceMinor: null, currency: null, stock: 'discontinued', via: 'jsonld' });
		if (r.ok) expect(r.notes.join(' ')).toMatch(/no price shown; the JSON-LD offer says the product is discontinued/);
	});

	it("reads a discontinued page without a price from the curator's stock selector", () => {
		const r = extractOffer({ body: page('discontinued-text-only.html'), format: 'selectors', selectors });
		expect(r).toMatchObject({ ok: true, priceMinor: null, stock: 'discontinued', via: 'selectors' });
		// Without a stock selector, the page's other text (a related product's price) is never read.
		expect(
			extractOffer({
				body: page('discontinued-text-only.html'),
				format: 'selectors',
				selectors: { ...selectors, stock: '.nothing' }
			})
		).toMatchObject({ ok: false, kind: 'no-price', stock: 'unknown' });
	});

	it('keeps a priceless page that does not say discontinued a failed read', () => {
		const body = page('discontinued-no-price.html')
			.replace('https://schema.org/Discontinued', 'https://schema.org/InStock')
			.replace('No longer available - see the Lumen Bridge 3', 'In stock');
		expect(extractOffer({ body, format: 'jsonld', selectors })).toMatchObject({ ok: false, kind: 'no-price' });
	});

	it('reads a discontinued API document without a price', () => {
		const apiMapping = { price: 'price', stock: 'status', fixedCurrency: 'EUR' };
		const body = JSON.stringify({ sku: 'LB2', status: 'discontinued', price: null });
		expect(extractOffer({ body, format: 'api', apiMapping })).toMatchObject({
			ok: true,
			priceMinor: null,
			stock: 'discontinued',
			via: 'api'
		});
		// The curator's value table wins over the general wording rules.
		const tabled = { ...apiMapping, stockValues: { eol: 'discontinued' as const } };
		expect(extractOffer({ body: JSON.stringify({ status: 'EOL' }), format: 'api', apiMapping: tabled })).toMatchObject({
			ok: true,
			stock: 'discontinued'
		});
		expect(extractOffer({ body: JSON.stringify({ status: 'in stock' }), format: 'api', apiMapping })).toMatchObject({
			ok: false,
			kind: 'no-price'
		});
	});
});
