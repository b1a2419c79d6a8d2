/**
 * Availability mapping.
 * Source: schema.org 30.0, ItemAvailability enumeration (12 members: BackOrder, Discontinued,
 * InStock, InStoreOnly, LimitedAvailability, MadeToOrder, OnlineOnly, OutOfStock, PreOrder,
 * PreSale, Reserved, SoldOut), written as full URLs such as https://schema.org/InStock
 * (https://schema.org/ItemAvailability). The mapping of each member onto our stock states is our own reading.
 */
import { describe, expect, it } from 'vitest';
import {
	ITEM_AVAILABILITY,
	mapAvailability,
	parseItemAvailability,
	stockToItemAvailability
} from '../../../src/lib/feeds';

describe('schema.org ItemAvailability (schema.org 30.0)', () => {
	it('knows exactly the 12 members', () => {
		expect([...ITEM_AVAILABILITY].sort()).toEqual(
			[
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
			].sort()
		);
	});

	const expected: Record<string, string> = {
		BackOrder: 'backorder',
		Discontinued: 'discontinued',
		InStock: 'in_stock',
		InStoreOnly: 'in_stock',
		LimitedAvailability: 'in_stock',
		MadeToOrder: 'backorder',
		OnlineOnly: 'in_stock',
		OutOfStock: 'out_of_stock',
		PreOrder: 'preorder',
		PreSale: 'preorder',
		Reserved: 'out_of_stock',
		SoldOut: 'out_of_stock'
	};

	it.each(Object.entries(expected))('%s maps to %s in every written form', (member, stock) => {
		for (const form of [
			`https://schema.org/${member}`,
			`http://schema.org/${member}`,
			member,
			`schema:${member}`,
			member.toLowerCase(),
			`https://schema.org/${member}/`
		]) {
			const r = mapAvailability(form);
			expect(r.stock, form).toBe(stock);
			expect(r.member, form).toBe(member);
		}
	});

	it('a schema.org URL that is not a member is unknown, with a note', () => {
		const r = mapAvailability('https://schema.org/SometimesInStock');
		expect(r.stock).toBe('unknown');
		expect(r.note).toMatch(/not an ItemAvailability member/);
		expect(parseItemAvailability('https://schema.org/InStockish')).toBeUndefined();
	});

	it('round-trips our states through their ItemAvailability member', () => {
		for (const s of ['in_stock', 'out_of_stock', 'preorder', 'backorder', 'discontinued'] as const) {
			expect(mapAvailability(`https://schema.org/${stockToItemAvailability(s)}`).stock).toBe(s);
		}
		expect(stockToItemAvailability('unknown')).toBeUndefined();
	});
});

describe('stock phrases (English and German)', () => {
	it.each([
		['In stock', 'in_stock'],
		['Only 2 left!', 'in_stock'],
		['Available', 'in_stock'],
		['Out of stock', 'out_of_stock'],
		['Sold out', 'out_of_stock'],
		['Sold out – back soon', 'out_of_stock'],
		['Back soon', 'out_of_stock'],
		['Currently unavailable', 'out_of_stock'],
		['Not in stock', 'out_of_stock'],
		['Pre-order', 'preorder'],
		['Available to pre-order', 'preorder'],
		['On backorder – ships in 3 weeks', 'backorder'],
		['No longer available', 'discontinued'],
		['Discontinued', 'discontinued'],
		['Auf Lager', 'in_stock'],
		['Sofort lieferbar', 'in_stock'],
		['Lieferbar in 1-3 Tagen', 'in_stock'],
		['Ausverkauft', 'out_of_stock'],
		['Nicht auf Lager', 'out_of_stock'],
		['Derzeit nicht verfügbar', 'out_of_stock'],
		['Vorbestellbar', 'preorder'],
		['Lieferbar in 2-3 Wochen', 'backorder'],
		['Nicht mehr lieferbar', 'discontinued']
	])('"%s" -> %s', (text, stock) => {
		expect(mapAvailability(text).stock).toBe(stock);
	});

	it.each([['Ask us'], ['Call for details'], ['Kontaktieren Sie uns'], ['🙂'], ['']])(
		'unrecognised "%s" is unknown, never out_of_stock',
		(text) => {
			const r = mapAvailability(text);
			expect(r.stock).toBe('unknown');
			expect(r.note).toBeTruthy();
		}
	);

	it('a missing value is unknown', () => {
		expect(mapAvailability(undefined).stock).toBe('unknown');
		expect(mapAvailability(null).stock).toBe('unknown');
	});
});
