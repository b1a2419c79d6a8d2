/**
 * One listing as GET /api/v1/listings answers it, as zod schemas: the route builds its rows to these
 * types and the OpenAPI description (./openapi.ts) is their JSON Schema, so the two cannot drift.
 * Free of `$lib`/`$env`, like ./contract.ts.
 */
import { z } from 'zod';
import { REGIONS, STOCK_STATES } from '../../enums';
import type { RestockOutlook } from '../../restock';

const money = z.object({ minor: z.number().int(), currency: z.string().describe('ISO 4217 code') });
const hoursOrNull = z.number().nullable();

/** A Kaplan-Meier figure over one kind of spell: the median (hours) and the finished spells behind it. */
const durationFigure = z.object({
	medianHours: hoursOrNull.describe(
		'Kaplan-Meier median in hours; null under 3 finished spells or when under half ended'
	),
	spells: z.number().int().min(0).describe('Finished spells behind the median (the sample size)')
});

export const restockOutlookJson = z
	.object({
		state: z.enum(['out', 'in']).nullable().describe('Out of stock or buyable now; null when no stock state is known'),
		currentForHours: hoursOrNull.describe('How long the current state has lasted, in hours'),
		restock: durationFigure.describe('Out-of-stock spells until a restock'),
		sellout: durationFigure.describe('In-stock spells until a sell-out'),
		text: z.string().nullable().describe('The outlook in words; null when there are too few spells to say anything')
	})
	.describe("Restock outlook from the listing's own stock history (Kaplan-Meier; the running spell is censored)");

export const shopRecordJson = z
	.object({
		line: z
			.string()
			.nullable()
			.describe('The shop record in a few words ("usually restocks within 2 weeks; delists rarely")'),
		page: z.string().describe('Path of the public shop page with the figures behind the line')
	})
	.describe("The listing's shop over the last 90 days");

export const listingRowJson = z.object({
	id: z.number().int(),
	shop: z.object({
		slug: z.string(),
		name: z.string(),
		region: z.enum(REGIONS),
		shipsTo: z.array(z.enum(REGIONS))
	}),
	url: z.string(),
	stock: z.enum(STOCK_STATES),
	price: money.nullable(),
	displayPrice: money.nullable(),
	servesRegion: z.boolean(),
	lastCheckedAt: z.iso.datetime({ offset: true }).nullable().describe('When the poller last read the page'),
	outlook: restockOutlookJson.nullable(),
	shopRecord: shopRecordJson,
	history: z.string().describe('Path of the listing history endpoint')
});

export const listingListJson = z.object({
	converter: z.string(),
	region: z.enum(REGIONS),
	currency: z.string(),
	listings: z.array(listingRowJson)
});

export type RestockOutlookJson = z.infer<typeof restockOutlookJson>;
export type ListingRowJson = z.infer<typeof listingRowJson>;

const hours = (ms: number | null) => (ms === null ? null : Math.round((ms / 3_600_000) * 10) / 10);

/** A restock outlook ($lib/restock) as the API gives it: medians in hours, one decimal. */
export function outlookJson(o: RestockOutlook | undefined): RestockOutlookJson | null {
	if (!o) return null;
	return {
		state: o.state,
		currentForHours: hours(o.currentForMs),
		restock: { medianHours: hours(o.restock.medianMs), spells: o.restock.spells },
		sellout: { medianHours: hours(o.sellout.medianMs), spells: o.sellout.spells },
		text: o.text
	};
}
