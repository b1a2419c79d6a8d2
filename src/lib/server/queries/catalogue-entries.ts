/**
 * Building catalogue entries (a converter's revisions, lead grade and offers priced for one
 * viewpoint) from the catalogue tables through the pure rules in $lib/finder and $lib/pricing.
 * The read model (read-model.ts) stores what this builds; pages read the stored result.
 */
import { asc, eq, inArray, sql, type SQL } from 'drizzle-orm';
import { chips, converters, revisions } from '../db/schema';
import {
	leadExpected,
	leadGrade,
	type CatalogueEntry,
	type CatalogueOffer,
	type CatalogueRevision,
	type PowerKind
} from '../../finder';
import {
	bestOfferByConverter,
	convertMinor,
	servesRegion,
	type CurrentOffer,
	type PricedOffer,
	type RatesPerEur,
	type Region
} from '../../pricing';

/** The pool-level client or a transaction: every read here works inside a writer's transaction too. */
import type { Db } from '../db/client';
import { preparedFor } from '../db/prepared';
export type { Db };

export const iso = (d: Date | string | null | undefined): string | null =>
	d == null ? null : d instanceof Date ? d.toISOString() : new Date(d).toISOString();

/** Where a visitor shops and which currency they read prices in. */
export interface Viewpoint {
	region: Region;
	currency: string;
}

export function toOffer(o: CurrentOffer | PricedOffer, currency: string, rates: RatesPerEur): CatalogueOffer {
	const displayMinor =
		'displayMinor' in o
			? o.displayMinor
			: o.priceMinor != null && o.currency
				? convertMinor(o.priceMinor, o.currency, currency, rates)
				: null;
	return {
		listingId: o.listingId,
		shopSlug: o.shopSlug,
		shopName: o.shopName,
		shopRegion: o.shopRegion,
		url: o.url,
		priceMinor: o.priceMinor,
		currency: o.currency,
		displayMinor,
		displayCurrency: currency,
		stock: o.stock,
		lastCheckedAt: iso(o.lastCheckedAt)
	};
}

type ConverterRow = typeof converters.$inferSelect;

export function groupBy<T, K>(xs: T[], key: (x: T) => K): Map<K, T[]> {
	const m = new Map<K, T[]>();
	for (const x of xs) {
		const k = key(x);
		const list = m.get(k);
		if (list) list.push(x);
		else m.set(k, [x]);
	}
	return m;
}

export async function revisionsFor(db: Db, converterIds: number[] | 'all') {
	if (converterIds !== 'all' && converterIds.length === 0) return [];
	const query = (where: SQL | undefined) =>
		db
			.select({
				id: revisions.id,
				converterId: revisions.converterId,
				code: revisions.code,
				chip: chips.name,
				chipSlug: chips.slug,
				chipMaker: chips.maker,
				chipNotes: chips.notes,
				boardMarking: revisions.boardMarking,
				band: revisions.band,
				score: revisions.score,
				scoreMin: revisions.scoreMin,
				scoreMax: revisions.scoreMax,
				deviationIre: revisions.deviationIre,
				bandReason: revisions.bandReason,
				expected: revisions.expectedBand,
				expectedBasis: revisions.expectedBasis,
				expectedDeviationIre: revisions.expectedDeviationIre,
				runs: revisions.runCount,
				rubricVersion: revisions.rubricVersion,
				gradedAt: revisions.gradedAt,
				retiredAt: revisions.retiredAt,
				seenFrom: revisions.seenFrom,
				seenTo: revisions.seenTo,
				notes: revisions.notes
			})
			.from(revisions)
			.innerJoin(chips, eq(chips.id, revisions.chipId))
			.where(where)
			.orderBy(asc(revisions.converterId), asc(revisions.code));
	if (converterIds === 'all') return query(undefined);
	// one converter's (its page): built once
	if (converterIds.length === 1)
		return preparedFor(db, 'revisions_of', () =>
			query(eq(revisions.converterId, sql.placeholder('id'))).prepare('revisions_of')
		).execute({ id: converterIds[0] });
	return query(inArray(revisions.converterId, converterIds));
}

export function buildEntries(
	rows: ConverterRow[],
	revs: Awaited<ReturnType<typeof revisionsFor>>,
	offers: CurrentOffer[],
	view: Viewpoint,
	rates: RatesPerEur
): CatalogueEntry[] {
	const best = bestOfferByConverter(offers, view.region, view.currency, rates);
	// Group once: a catalogue of thousands must not scan every offer for every converter.
	const revsBy = groupBy(revs, (r) => r.converterId);
	const offersBy = groupBy(offers, (o) => o.converterId);
	return rows.map((c) => {
		const revisionsOf: CatalogueRevision[] = (revsBy.get(c.id) ?? []).map((r) => ({
			id: r.id,
			code: r.code,
			chip: r.chip,
			chipSlug: r.chipSlug,
			boardMarking: r.boardMarking,
			band: r.band,
			score: r.score,
			deviationIre: r.deviationIre,
			bandReason: r.bandReason,
			expected: r.expected,
			expectedBasis: r.expectedBasis,
			expectedDeviationIre: r.expectedDeviationIre,
			runs: r.runs,
			retired: r.retiredAt !== null,
			seenFrom: r.seenFrom,
			seenTo: r.seenTo
		}));
		const lead = leadGrade(revisionsOf);
		const inRegion = (offersBy.get(c.id) ?? []).filter((o) => servesRegion(o, view.region));
		const bestOffer = best.get(c.id);
		return {
			id: c.id,
			slug: c.slug,
			brand: c.brand,
			model: c.model,
			summary: c.summary,
			hasAudioOut: c.hasAudioOut,
			power: c.power as PowerKind,
			outputs: c.outputs,
			lastReviewedAt: iso(c.lastReviewedAt),
			revisions: revisionsOf,
			bestBand: lead.band,
			bestScore: lead.score,
			bestDeviationIre: lead.deviationIre,
			bestBandReason: lead.reason,
			expected: leadExpected(revisionsOf),
			best: bestOffer ? toOffer(bestOffer, view.currency, rates) : null,
			inStockShops: new Set(inRegion.filter((o) => o.stock === 'in_stock').map((o) => o.shopSlug)).size
		};
	});
}
