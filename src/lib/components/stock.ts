/** Stock states of a shop listing in the UI; the list itself is in src/lib/enums.ts. */
import { isOneOf, STOCK_STATES, type StockState } from '../enums';

export { STOCK_STATES, type StockState };

export const STOCK_LABELS: Readonly<Record<StockState, string>> = {
	in_stock: 'In stock',
	preorder: 'Pre-order',
	backorder: 'Backorder',
	out_of_stock: 'Sold out',
	discontinued: 'Discontinued',
	unknown: 'Unknown'
};

export function isStockState(value: unknown): value is StockState {
	return isOneOf(STOCK_STATES, value);
}

export function stockLabel(state: string | null | undefined): string {
	return isStockState(state) ? STOCK_LABELS[state] : STOCK_LABELS.unknown;
}

/** The id of a stock state's shared glyph (GlyphSprite.svelte), for `<use href="#…">`. */
export const stockGlyphId = (state: StockState) => `sg-stock-${state}`;
