/**
 * The public guide's catalogue rules: what a catalogue entry is, how the catalogue filters
 * and sorts, and how the finder ranks and explains its picks. Pure and browser-safe: the
 * server builds entries from cached grades and the pricing helpers, this module only reads
 * them (it never recomputes a grade or a price).
 */
import { BANDS, bandRank, type Band } from './components/bands';
import { POWER_KINDS, type PowerKind } from './enums';
import { formatMoney, REGION_CODES, REGION_LABELS, type Region, type StockState } from './pricing';

export { POWER_KINDS, type PowerKind };
export const POWER_LABELS: Record<PowerKind, string> = {
	'usb-bus': 'USB bus power',
	'usb-adapter': 'USB power adapter',
	barrel: 'Barrel power input'
};
export const SORTS = ['band', 'price', 'name'] as const;
export type CatalogueSort = (typeof SORTS)[number];

export interface CatalogueRevision {
	id: number;
	code: string;
	chip: string;
	chipSlug: string;
	boardMarking: string;
	band: Band | null;
	score: number | null;
	/** Worst deviation (IRE) behind the band, and why the band is not where it falls (bands.ts). */
	deviationIre?: number | null;
	bandReason?: string | null;
	/** Expected band while not measured (a prediction from the chip's runs elsewhere), and its basis. */
	expected: Band | null;
	expectedBasis: string | null;
	expectedDeviationIre?: number | null;
	runs: number;
	retired: boolean;
	seenFrom: string | null;
	seenTo: string | null;
}

export interface CatalogueOffer {
	listingId: number;
	shopSlug: string;
	shopName: string;
	shopRegion: Region;
	url: string;
	priceMinor: number | null;
	currency: string | null;
	/** Price in the visitor's display currency (null when unknown or no rate). */
	displayMinor: number | null;
	displayCurrency: string;
	stock: StockState;
	lastCheckedAt: string | null;
}

export interface CatalogueEntry {
	id: number;
	slug: string;
	brand: string;
	model: string;
	summary: string;
	hasAudioOut: boolean;
	power: PowerKind;
	outputs: string[];
	lastReviewedAt: string | null;
	revisions: CatalogueRevision[];
	/** Best band over current revisions (see currentRevisions), null when none is graded. */
	bestBand: Band | null;
	bestScore: number | null;
	/** The lead revision's worst deviation (IRE) and band reason, for the band mark. */
	bestDeviationIre?: number | null;
	bestBandReason?: string | null;
	/** Best expected band over current revisions not yet measured (see leadExpected); never a measurement. */
	expected: { band: Band; basis: string; deviationIre: number | null } | null;
	/** The cheapest buyable offer in the region (from pricing.bestOfferByConverter). */
	best: CatalogueOffer | null;
	/** Shops in the region with the converter in stock now. */
	inStockShops: number;
}

/**
 * The revisions a buyer can get today: not retired and still seen in shops (no end date).
 * An older revision that shops no longer send must not lift a converter's grade: that is
 * the trap of a box that changed chip. A converter whose every revision has an end date
 * (no longer made) is judged on all its non-retired revisions.
 */
export function currentRevisions<R extends Pick<CatalogueRevision, 'retired' | 'seenTo'>>(revisions: R[]): R[] {
	const live = revisions.filter((r) => !r.retired);
	const inShops = live.filter((r) => r.seenTo === null);
	return inShops.length ? inShops : live;
}

/** True when a revision is no longer what shops send (retired, or seen only until a date while a newer one ships). */
export function isPastRevision<R extends Pick<CatalogueRevision, 'retired' | 'seenTo'>>(r: R, all: R[]): boolean {
	return !currentRevisions(all).includes(r);
}

/**
 * Older revisions that graded better than anything shops send today: the buyer must not
 * trust an old review of the same box name.
 */
export function betterPastRevisions(revisions: CatalogueRevision[]): CatalogueRevision[] {
	const lead = leadGrade(revisions).band;
	return revisions.filter(
		(r) =>
			!r.retired &&
			isPastRevision(r, revisions) &&
			r.band !== null &&
			(lead === null || bandRank(r.band) < bandRank(lead))
	);
}

/** The lead band of a converter: the best over its current revisions. */
export function leadGrade(revisions: CatalogueRevision[]): {
	band: Band | null;
	score: number | null;
	deviationIre: number | null;
	reason: string | null;
} {
	let lead: CatalogueRevision | null = null;
	for (const r of currentRevisions(revisions)) {
		if (!r.band) continue;
		const better =
			lead === null ||
			bandRank(r.band) < bandRank(lead.band) ||
			(r.band === lead.band && (r.score ?? -1) > (lead.score ?? -1));
		if (better) lead = r;
	}
	return {
		band: lead?.band ?? null,
		score: lead?.score ?? null,
		deviationIre: lead?.deviationIre ?? null,
		reason: lead?.bandReason ?? null
	};
}

/** The best expected band among current revisions that have no measured grade, with its basis. */
export function leadExpected(
	revisions: CatalogueRevision[]
): { band: Band; basis: string; deviationIre: number | null } | null {
	let lead: { band: Band; basis: string; deviationIre: number | null } | null = null;
	for (const r of currentRevisions(revisions)) {
		if (r.band || !r.expected) continue;
		if (!lead || bandRank(r.expected) < bandRank(lead.band))
			lead = { band: r.expected, basis: r.expectedBasis ?? '', deviationIre: r.expectedDeviationIre ?? null };
	}
	return lead;
}

/**
 * True when any current revision (see currentRevisions) is `min` or better. Measured grades
 * only, unless `includeExpected` (the visitor ticked "include expected grades"): then an
 * unmeasured revision's expected band counts too.
 */
export function meetsBand(entry: Pick<CatalogueEntry, 'revisions'>, min: Band, includeExpected = false): boolean {
	return currentRevisions(entry.revisions).some((r) => {
		const band = r.band ?? (includeExpected ? r.expected : null);
		return band !== null && bandRank(band) <= bandRank(min);
	});
}

/** The band an entry sorts by: measured, or with `includeExpected` the better of measured and expected. */
export function sortBand(e: Pick<CatalogueEntry, 'bestBand' | 'expected'>, includeExpected = false): Band | null {
	if (!includeExpected || !e.expected) return e.bestBand;
	return bandRank(e.expected.band) < bandRank(e.bestBand) ? e.expected.band : e.bestBand;
}

/** True when the current revisions do not all share one band: a buyer may get either. */
export function bandsDiffer(entry: {
	revisions: Array<Pick<CatalogueRevision, 'band' | 'retired' | 'seenTo'>>;
}): boolean {
	return new Set(currentRevisions(entry.revisions).map((r) => r.band ?? 'none')).size > 1;
}

export interface CatalogueFilter {
	minBand?: Band;
	/** In minor units of the display currency. */
	priceMin?: number;
	priceMax?: number;
	inStock?: boolean;
	audio?: boolean;
	power?: PowerKind;
	sort?: CatalogueSort;
	/** Let expected grades (not yet measured) meet the band filter and sort. Off by default. */
	includeExpected?: boolean;
}

/** Apply the catalogue filters (band, price, stock, audio, power), then sort. */
export function filterCatalogue(entries: CatalogueEntry[], f: CatalogueFilter): CatalogueEntry[] {
	const hit = entries.filter((e) => {
		if (f.minBand && !meetsBand(e, f.minBand, f.includeExpected)) return false;
		if (f.audio && !e.hasAudioOut) return false;
		if (f.power && e.power !== f.power) return false;
		if (f.inStock && e.inStockShops === 0) return false;
		if (f.priceMin != null || f.priceMax != null) {
			const p = e.best?.displayMinor;
			if (p == null) return false;
			if (f.priceMin != null && p < f.priceMin) return false;
			if (f.priceMax != null && p > f.priceMax) return false;
		}
		return true;
	});
	return sortCatalogue(hit, f.sort ?? 'band', f.includeExpected);
}

const byName = (a: CatalogueEntry, b: CatalogueEntry) =>
	a.brand.localeCompare(b.brand, 'en') || a.model.localeCompare(b.model, 'en');
const byBandWith = (withExpected: boolean) => (a: CatalogueEntry, b: CatalogueEntry) =>
	bandRank(sortBand(a, withExpected)) - bandRank(sortBand(b, withExpected)) ||
	// at the same band a measured grade goes before an expected one
	Number(a.bestBand === null) - Number(b.bestBand === null) ||
	(b.bestScore ?? -1) - (a.bestScore ?? -1);
const byPrice = (a: CatalogueEntry, b: CatalogueEntry) =>
	(a.best?.displayMinor ?? Infinity) - (b.best?.displayMinor ?? Infinity);

/** Sort a copy: best band (then score), lowest price (unpriced last), or brand and model. */
export function sortCatalogue(
	entries: CatalogueEntry[],
	sort: CatalogueSort,
	includeExpected = false
): CatalogueEntry[] {
	const byBand = byBandWith(includeExpected);
	const cmp =
		sort === 'name'
			? byName
			: sort === 'price'
				? (a: CatalogueEntry, b: CatalogueEntry) => byPrice(a, b) || byBand(a, b) || byName(a, b)
				: (a: CatalogueEntry, b: CatalogueEntry) => byBand(a, b) || byPrice(a, b) || byName(a, b);
	return [...entries].sort(cmp);
}

export interface FinderInput {
	region: Region;
	/** Budget in minor units of the display currency; none when absent. */
	budgetMinor?: number;
	needsAudio?: boolean;
	inStockNow?: boolean;
	minBand?: Band;
	/** Let expected grades (not yet measured) count. Off by default. */
	includeExpected?: boolean;
}

export interface FinderResult {
	entry: CatalogueEntry;
	rank: number;
	/** One sentence in plain words: band, where it can be bought, lowest price. */
	explanation: string;
	/** Extra notes a buyer should read (another revision grades worse, pre-order only ...). */
	notes: string[];
}

const BAND_WORD: Record<Band, string> = {
	exact: 'Exact',
	close: 'Close',
	fair: 'Fair',
	poor: 'Poor',
	failing: 'Failing'
};

/** Explain one entry in words, e.g. "Close band; in stock at 2 shops in your region; lowest 12.90 EUR". */
export function explainEntry(e: CatalogueEntry, region: Region, includeExpected = false): string {
	const parts: string[] = [];
	const band = sortBand(e, includeExpected);
	if (band && band !== e.bestBand) parts.push(`expected ${BAND_WORD[band]} band (not yet measured)`);
	else parts.push(band ? `${BAND_WORD[band]} band` : 'not graded yet');
	if (e.inStockShops > 0)
		parts.push(`in stock at ${e.inStockShops} ${e.inStockShops === 1 ? 'shop' : 'shops'} in your region`);
	else if (e.best) parts.push(`${e.best.stock === 'preorder' ? 'pre-order only' : 'orderable'} in your region`);
	else parts.push(`not buyable in ${REGION_LABELS[region]} right now`);
	if (e.best?.displayMinor != null) parts.push(`lowest ${formatMoney(e.best.displayMinor, e.best.displayCurrency)}`);
	return parts.join('; ');
}

function notesFor(e: CatalogueEntry, minBand: Band | undefined): string[] {
	const notes: string[] = [];
	const current = currentRevisions(e.revisions).filter((r) => r.band);
	const worse = current.filter((r) => e.bestBand && bandRank(r.band) > bandRank(e.bestBand));
	for (const r of worse) {
		notes.push(
			`Revision ${r.code} (chip ${r.chip}) grades ${BAND_WORD[r.band!]}: which one a shop sends cannot be chosen.`
		);
	}
	if (minBand && worse.some((r) => bandRank(r.band) > bandRank(minBand))) {
		notes.push(`Only some revisions reach ${BAND_WORD[minBand]} or better.`);
	}
	return notes;
}

/**
 * Rank the catalogue for a buyer: keep entries that meet every need, then order by band,
 * then whether they can be bought in the region now, then score, then price.
 */
export function rankFinder(entries: CatalogueEntry[], input: FinderInput): FinderResult[] {
	const hit = entries.filter((e) => {
		if (input.minBand && !meetsBand(e, input.minBand, input.includeExpected)) return false;
		if (input.needsAudio && !e.hasAudioOut) return false;
		if (input.inStockNow && e.inStockShops === 0) return false;
		if (input.budgetMinor != null) {
			const p = e.best?.displayMinor;
			if (p == null || p > input.budgetMinor) return false;
		}
		return true;
	});
	const buyable = (e: CatalogueEntry) => (e.inStockShops > 0 ? 0 : e.best ? 1 : 2);
	hit.sort(
		(a, b) =>
			bandRank(sortBand(a, input.includeExpected)) - bandRank(sortBand(b, input.includeExpected)) ||
			Number(a.bestBand === null) - Number(b.bestBand === null) ||
			buyable(a) - buyable(b) ||
			(b.bestScore ?? -1) - (a.bestScore ?? -1) ||
			byPrice(a, b) ||
			byName(a, b)
	);
	return hit.map((entry, i) => ({
		entry,
		rank: i + 1,
		explanation: explainEntry(entry, input.region, input.includeExpected),
		notes: notesFor(entry, input.minBand)
	}));
}

export { BANDS, REGION_CODES };

/** One finder result as the page and GET /api/v1/finder show it. */
export interface FinderItem {
	rank: number;
	slug: string;
	brand: string;
	model: string;
	band: Band | null;
	score: number | null;
	deviationIre: number | null;
	bandReason: string | null;
	/** Expected grade of a revision not yet measured (never a measurement), beside the measured band. */
	expected: { band: Band; basis: string; deviationIre: number | null } | null;
	hasAudioOut: boolean;
	inStockShops: number;
	best: { shop: string; stock: StockState; priceMinor: number | null; currency: string; url: string } | null;
	explanation: string;
	notes: string[];
}

export function finderItem(r: FinderResult): FinderItem {
	const e = r.entry;
	return {
		rank: r.rank,
		slug: e.slug,
		brand: e.brand,
		model: e.model,
		band: e.bestBand,
		score: e.bestScore,
		deviationIre: e.bestDeviationIre ?? null,
		bandReason: e.bestBandReason ?? null,
		expected: e.expected,
		hasAudioOut: e.hasAudioOut,
		inStockShops: e.inStockShops,
		best: e.best
			? {
					shop: e.best.shopName,
					stock: e.best.stock,
					priceMinor: e.best.displayMinor,
					currency: e.best.displayCurrency,
					url: e.best.url
				}
			: null,
		explanation: r.explanation,
		notes: r.notes
	};
}
