/**
 * Extractor fixes, each on a fixture page written for it (invented shops and products):
 * "CA$" is the Canadian dollar (ISO 4217 CAD), a bare amount is read in the listing's configured
 * currency with a note, and a symbol of another currency stays a wrong-currency failure.
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
});
