/**
 * Shared types for reading shop pages. These modules are pure (no DB, no SvelteKit) so the
 * poller job and the curator's "test read" run exactly the same code.
 */

import { STOCK_STATES, type StockState } from '../enums';

export { STOCK_STATES, type StockState };

/** How a shop publishes its offers; the listing's configured format says what we expect to find. */
export type OfferFormat = 'jsonld' | 'microdata' | 'selectors' | 'api';

/** CSS selectors a curator sets for a plain-HTML shop. */
export interface OfferSelectors {
	price: string;
	stock: string;
	currency?: string;
	title?: string;
}

/** How to read a JSON product API: dot paths into the document (e.g. "stock.status", "offers.0.price"). */
export interface ApiMapping {
	price: string;
	/** Path to a currency code or symbol in the document. */
	currency?: string;
	/** The API's fixed currency when the document does not carry one (a curator's statement). */
	fixedCurrency?: string;
	stock: string;
	/** Map raw stock values (compared case-insensitively) to stock states. */
	stockValues?: Record<string, StockState>;
	/** 'major' (default): 24.99 means 24.99 units; 'minor': 2499 means 24.99 units. */
	priceScale?: 'major' | 'minor';
	/** Optional path to the product's name. */
	title?: string;
}

export interface ExtractInput {
	body: string;
	contentType?: string;
	format: OfferFormat;
	selectors?: OfferSelectors;
	apiMapping?: ApiMapping;
	/** The listing's currency (ISO 4217). Resolves an ambiguous "$" and flags a wrong currency. */
	expectedCurrency?: string;
}

export type ExtractFailureKind = 'unreadable' | 'no-price' | 'no-currency' | 'wrong-currency' | 'parse';

export interface ExtractSuccess {
	ok: true;
	/**
	 * Integer amount in the currency's minor units (ISO 4217 exponent). Null only when the page
	 * says the product is discontinued and shows no price: the poller then keeps the last known price.
	 */
	priceMinor: number | null;
	/** ISO 4217 code; null exactly when priceMinor is. */
	currency: string | null;
	stock: StockState;
	title?: string;
	/** Which reader produced the offer. */
	via: OfferFormat;
	notes: string[];
}

export interface ExtractFailure {
	ok: false;
	/** A failed read never claims a stock state: the poller must not record a change from it. */
	stock: 'unknown';
	/** Clear words for the curator, e.g. 'no price found: selector ".artikel .preis" matched nothing'. */
	reason: string;
	kind: ExtractFailureKind;
	/** Extra detail gathered on the way (other readers tried, truncation hints). */
	notes?: string[];
}

export type ExtractResult = ExtractSuccess | ExtractFailure;
