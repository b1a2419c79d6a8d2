/** Stock states of a shop listing (schema.org ItemAvailability maps onto these). */
export const STOCK_STATES = [
	'in_stock',
	'preorder',
	'backorder',
	'out_of_stock',
	'discontinued',
	'unknown'
] as const;

export type StockState = (typeof STOCK_STATES)[number];

export const STOCK_LABELS: Readonly<Record<StockState, string>> = {
	in_stock: 'In stock',
	preorder: 'Pre-order',
	backorder: 'Backorder',
	out_of_stock: 'Sold out',
	discontinued: 'Discontinued',
	unknown: 'Unknown'
};

export function isStockState(value: unknown): value is StockState {
	return typeof value === 'string' && (STOCK_STATES as readonly string[]).includes(value);
}

export function stockLabel(state: string | null | undefined): string {
	return isStockState(state) ? STOCK_LABELS[state] : STOCK_LABELS.unknown;
}

/** Can someone place an order now (in stock, pre-order or backorder)? */
export function isBuyable(state: string | null | undefined): boolean {
	return state === 'in_stock' || state === 'preorder' || state === 'backorder';
}
