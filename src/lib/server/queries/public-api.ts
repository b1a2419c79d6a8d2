/** The /api/v1 JSON shapes of catalogue entries, converters and revisions (documented in src/lib/server/api/openapi.ts). */
import type { CatalogueEntry, CatalogueOffer } from '../../finder';
import type { ConverterDetail, PublicRevision } from './public';

function apiOffer(o: CatalogueOffer | null) {
	if (!o) return null;
	return {
		listingId: o.listingId,
		shop: { slug: o.shopSlug, name: o.shopName, region: o.shopRegion },
		url: o.url,
		stock: o.stock,
		price: o.priceMinor != null && o.currency ? { minor: o.priceMinor, currency: o.currency } : null,
		displayPrice: o.displayMinor != null ? { minor: o.displayMinor, currency: o.displayCurrency } : null,
		lastCheckedAt: o.lastCheckedAt
	};
}

function apiExpected(r: {
	expected: CatalogueEntry['bestBand'];
	expectedBasis: string | null;
	expectedDeviationIre?: number | null;
}) {
	return r.expected
		? { band: r.expected, basis: r.expectedBasis ?? '', deviationIre: r.expectedDeviationIre ?? null }
		: null;
}

export function apiConverter(e: CatalogueEntry) {
	return {
		slug: e.slug,
		brand: e.brand,
		model: e.model,
		summary: e.summary,
		hasAudioOut: e.hasAudioOut,
		power: e.power,
		outputs: e.outputs,
		lastReviewedAt: e.lastReviewedAt,
		band: e.bestBand,
		score: e.bestScore,
		deviationIre: e.bestDeviationIre ?? null,
		bandReason: e.bestBandReason ?? null,
		// a prediction for revisions not yet measured, never folded into `band`
		expected: e.expected,
		revisions: e.revisions.map((r) => ({
			id: r.id,
			code: r.code,
			chip: { slug: r.chipSlug, name: r.chip },
			boardMarking: r.boardMarking,
			band: r.band,
			score: r.score,
			deviationIre: r.deviationIre ?? null,
			bandReason: r.bandReason ?? null,
			expected: apiExpected(r),
			benchRuns: r.runs,
			retired: r.retired,
			seenFrom: r.seenFrom,
			seenTo: r.seenTo
		})),
		bestOffer: apiOffer(e.best),
		inStockShops: e.inStockShops,
		links: { self: `/api/v1/converters/${e.slug}`, page: `/converters/${e.slug}` }
	};
}

export function apiRevision(r: PublicRevision) {
	return {
		id: r.id,
		code: r.code,
		chip: { slug: r.chipSlug, name: r.chip, maker: r.chipMaker },
		boardMarking: r.boardMarking,
		band: r.band,
		score: r.score,
		deviationIre: r.deviationIre ?? null,
		bandReason: r.bandReason ?? null,
		expected: apiExpected(r),
		gradeHistory: r.gradeHistory,
		scoreRange: r.scoreMin !== null && r.scoreMax !== null ? [r.scoreMin, r.scoreMax] : null,
		benchRuns: r.runs,
		rubricVersion: r.rubricVersion,
		gradedAt: r.gradedAt,
		retired: r.retired,
		seenFrom: r.seenFrom,
		seenTo: r.seenTo,
		medianRunId: r.medianRun !== null ? r.runsDetail[r.medianRun].id : null,
		runs: r.runsDetail.map((x) => ({
			id: x.id,
			measuredOn: x.measuredOn,
			measuredBy: x.measuredBy,
			testSource: x.testSource,
			pattern: x.pattern,
			instrument: x.instrument,
			termination: x.termination,
			fullScaleMv: x.fullScaleMv,
			band: x.band,
			score: x.score,
			readings: x.input.steps,
			report: x.report
		}))
	};
}

export function apiConverterDetail(d: ConverterDetail) {
	const base = apiConverter(d.entry);
	return {
		converter: { ...base, revisions: d.revisions.map(apiRevision) },
		listings: d.listings.map((l) => ({ ...apiOffer(l)!, shipsTo: l.shipsTo, servesRegion: l.servesViewer })),
		teardowns: d.teardowns,
		odds: d.odds
	};
}
