/**
 * Stock wording to stock states: schema.org ItemAvailability values and the phrases shops print.
 * The rule that matters most: text we do not recognise is 'unknown', never a false 'out_of_stock'
 * (which would hide a buyable unit) or a false 'in_stock' (which would send a restock alert).
 */
import type { StockState } from './types';

/** The 12 members of schema.org ItemAvailability (schema.org version 30.0). */
export const ITEM_AVAILABILITY = [
	'BackOrder',
	'Discontinued',
	'InStock',
	'InStoreOnly',
	'LimitedAvailability',
	'MadeToOrder',
	'OnlineOnly',
	'OutOfStock',
	'PreOrder',
	'PreSale',
	'Reserved',
	'SoldOut'
] as const;
export type ItemAvailability = (typeof ITEM_AVAILABILITY)[number];

/**
 * Our reading of each member. Where schema.org's meaning is narrower than our states, the note
 * keeps the detail so the UI can show it.
 */
export const ITEM_AVAILABILITY_STATES: Readonly<Record<ItemAvailability, { stock: StockState; note?: string }>> = {
	BackOrder: { stock: 'backorder' },
	Discontinued: { stock: 'discontinued' },
	InStock: { stock: 'in_stock' },
	// The shop has it, only not through its web checkout; a buyer can still get one this week.
	InStoreOnly: { stock: 'in_stock', note: 'in store only, not orderable online' },
	LimitedAvailability: { stock: 'in_stock', note: 'limited availability' },
	// Orderable now, ships once made: the same promise to a buyer as a back order.
	MadeToOrder: { stock: 'backorder', note: 'made to order' },
	OnlineOnly: { stock: 'in_stock', note: 'online only' },
	OutOfStock: { stock: 'out_of_stock' },
	PreOrder: { stock: 'preorder' },
	// Orderable before general release, like a pre-order.
	PreSale: { stock: 'preorder', note: 'pre-sale' },
	// Held for someone else: not buyable now.
	Reserved: { stock: 'out_of_stock', note: 'reserved' },
	SoldOut: { stock: 'out_of_stock', note: 'sold out' }
};

const MEMBER_BY_LOWER = new Map(ITEM_AVAILABILITY.map((m) => [m.toLowerCase(), m]));

/**
 * Recognise an ItemAvailability value: the full URL over http or https ("https://schema.org/InStock"),
 * a prefixed name ("schema:InStock") or the short name ("InStock"), in any letter case.
 */
export function parseItemAvailability(value: string): ItemAvailability | undefined {
	const v = value.trim();
	const m = v.match(/^(?:https?:\/\/(?:www\.)?schema\.org\/|schema:)?([A-Za-z]+)\/?$/);
	if (!m) return undefined;
	return MEMBER_BY_LOWER.get(m[1].toLowerCase());
}

/**
 * Stock phrases in English and German, checked in order: negative and "later" wordings first so
 * "nicht auf Lager" is not read as "auf Lager" and "unavailable" not as "available".
 */
const PHRASES: ReadonlyArray<[RegExp, StockState]> = [
	[
		/\b(no longer (available|sold|stocked)|discontinued|end of life|nicht mehr (lieferbar|erhältlich|verfügbar)|ausgelaufen|eingestellt)\b/,
		'discontinued'
	],
	[/\b(pre-?\s?orders?|vorbestellbar|vorbestellung|vorbestellen|pre-?sale)\b/, 'preorder'],
	// "Lieferbar in 2-3 Wochen" means not on hand (weeks away); "Lieferbar in 1-3 Tagen" is ordinary stock.
	[
		/\b(back-?\s?order(ed)?|on back\s?order|made to order|lieferbar in \d+\s*(-|–|bis)?\s*\d*\s*(wochen|monaten)|nachbestellt|wird nachgeliefert)\b/,
		'backorder'
	],
	[
		/\b(out of stock|sold out|not in stock|not available|unavailable|currently unavailable|back soon|coming soon|temporarily out|ausverkauft|vergriffen|nicht (auf lager|lieferbar|verfügbar|vorrätig)|derzeit nicht|zurzeit nicht)\b/,
		'out_of_stock'
	],
	[
		/\b(in stock|available|ready to ship|ships (today|tomorrow|in \d+)|only \d+ left|low stock|few left|auf lager|sofort lieferbar|lieferbar|verfügbar|vorrätig|am lager|noch \d+ (stück|stk))\b/,
		'in_stock'
	]
];

export interface AvailabilityReading {
	stock: StockState;
	/** The ItemAvailability member when the value was a schema.org one. */
	member?: ItemAvailability;
	/** Why, in words, when the reading is partial or unknown. */
	note?: string;
}

/**
 * Map an availability value (schema.org ItemAvailability or a shop's own stock phrase) to a
 * stock state. Unrecognised text gives 'unknown' with a note quoting it.
 */
export function mapAvailability(value: string | null | undefined): AvailabilityReading {
	if (value == null || !String(value).trim()) return { stock: 'unknown', note: 'no availability given' };
	const raw = String(value);
	const member = parseItemAvailability(raw);
	if (member) {
		const { stock, note } = ITEM_AVAILABILITY_STATES[member];
		return { stock, member, note };
	}
	if (/schema\.org\//i.test(raw)) {
		return { stock: 'unknown', note: `"${raw.trim()}" is not an ItemAvailability member` };
	}
	const text = raw.normalize('NFKC').toLowerCase().replace(/\s+/g, ' ').trim();
	for (const [re, stock] of PHRASES) {
		if (re.test(text)) return { stock };
	}
	return { stock: 'unknown', note: `stock wording "${raw.trim().slice(0, 80)}" not recognised` };
}

/** The ItemAvailability member we publish for a stock state (used by the fake shops and exports). */
export function stockToItemAvailability(stock: StockState): ItemAvailability | undefined {
	switch (stock) {
		case 'in_stock':
			return 'InStock';
		case 'out_of_stock':
			return 'OutOfStock';
		case 'preorder':
			return 'PreOrder';
		case 'backorder':
			return 'BackOrder';
		case 'discontinued':
			return 'Discontinued';
		default:
			return undefined;
	}
}
