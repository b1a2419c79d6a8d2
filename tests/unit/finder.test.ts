import { describe, expect, it } from 'vitest';
import {
	betterPastRevisions,
	currentRevisions,
	explainEntry,
	filterCatalogue,
	leadExpected,
	leadGrade,
	meetsBand,
	rankFinder,
	sortCatalogue,
	type CatalogueEntry,
	type CatalogueRevision
} from '../../src/lib/finder';

let nextId = 1;
const rev = (
	code: string,
	band: CatalogueRevision['band'],
	score: number | null,
	retired = false
): CatalogueRevision => ({
	id: nextId++,
	code,
	chip: `C-${code}`,
	chipSlug: `c-${code}`,
	boardMarking: '',
	band,
	score,
	runs: 2,
	retired,
	seenFrom: null,
	seenTo: null,
	expected: null,
	expectedBasis: null
});
function entry(
	slug: string,
	revisions: CatalogueRevision[],
	o: Partial<CatalogueEntry> & { price?: number | null; inStock?: number } = {}
): CatalogueEntry {
	const lead = leadGrade(revisions);
	const price = o.price === undefined ? 1500 : o.price;
	const best =
		price === null
			? null
			: {
					listingId: nextId++,
					shopSlug: 's',
					shopName: 'Shop S',
					shopRegion: 'eu' as const,
					url: 'http://shop.test/x',
					priceMinor: price,
					currency: 'EUR',
					displayMinor: price,
					displayCurrency: 'EUR',
					stock: (o.inStock ?? 1) > 0 ? ('in_stock' as const) : ('preorder' as const),
					lastCheckedAt: null
				};
	return {
		id: nextId++,
		slug,
		brand: o.brand ?? slug,
		model: 'M',
		summary: '',
		hasAudioOut: o.hasAudioOut ?? true,
		power: o.power ?? 'usb-bus',
		outputs: ['vga'],
		lastReviewedAt: null,
		revisions,
		bestBand: lead.band,
		bestScore: lead.score,
		expected: leadExpected(revisions),
		best,
		inStockShops: price === null ? 0 : (o.inStock ?? 1)
	};
}

describe('band filter semantics', () => {
	it('matches when any current revision reaches the band, and ignores retired ones', () => {
		const changed = entry('changed', [rev('A', 'close', 85), rev('B', 'failing', 30)]);
		const retiredGood = entry('retired-good', [rev('A', 'exact', 98, true), rev('B', 'poor', 60)]);
		expect(meetsBand(changed, 'close')).toBe(true);
		expect(meetsBand(changed, 'exact')).toBe(false);
		expect(meetsBand(retiredGood, 'close')).toBe(false);
		expect(leadGrade(retiredGood.revisions)).toEqual({ band: 'poor', score: 60, deviationIre: null, reason: null });
	});

	it('judges a converter that changed chip by the revision shops send now, not an older better one', () => {
		const older = { ...rev('A', 'close', 85), seenTo: '2025-08-31' };
		const now = rev('B', 'failing', 30);
		const changed = entry('changed-chip', [older, now]);
		expect(currentRevisions(changed.revisions)).toEqual([now]);
		expect(meetsBand(changed, 'close')).toBe(false);
		expect(leadGrade(changed.revisions)).toEqual({ band: 'failing', score: 30, deviationIre: null, reason: null });
		expect(betterPastRevisions(changed.revisions)).toEqual([older]);
	});

	it("carries the lead revision's worst deviation and band reason for the band mark", () => {
		const a = { ...rev('A', 'fair', 70), deviationIre: 2.8, bandReason: null };
		const b = { ...rev('B', 'failing', 20), deviationIre: 4.1, bandReason: 'crushed' };
		expect(leadGrade([a, b])).toEqual({ band: 'fair', score: 70, deviationIre: 2.8, reason: null });
		expect(leadGrade([b])).toEqual({ band: 'failing', score: 20, deviationIre: 4.1, reason: 'crushed' });
	});

	it('judges a converter no longer made (every revision has an end date) on all its revisions', () => {
		const gone = entry('gone', [
			{ ...rev('A', 'close', 85), seenTo: '2024-01-31' },
			{ ...rev('B', 'fair', 70), seenTo: '2025-01-31' }
		]);
		expect(meetsBand(gone, 'close')).toBe(true);
		expect(betterPastRevisions(gone.revisions)).toEqual([]);
	});

	it('keeps every revision on the matching entry so the chip change stays visible', () => {
		const changed = entry('changed', [rev('A', 'close', 85), rev('B', 'failing', 30)]);
		const [hit] = filterCatalogue([changed], { minBand: 'close' });
		expect(hit.revisions.map((r) => r.band)).toEqual(['close', 'failing']);
	});
});

describe('filterCatalogue', () => {
	const a = entry('a-exact', [rev('A', 'exact', 97)], { price: 2500, hasAudioOut: false, power: 'barrel' });
	const b = entry('b-close', [rev('A', 'close', 88)], { price: 1200 });
	const c = entry('c-fair', [rev('A', 'fair', 70)], { price: null });
	const d = entry('d-poor', [rev('A', 'poor', 60)], { price: 900, inStock: 0 });
	const all = [d, c, b, a];

	it('filters by price range in the display currency, leaving unpriced entries out', () => {
		expect(filterCatalogue(all, { priceMin: 1000, priceMax: 2000 }).map((e) => e.slug)).toEqual(['b-close']);
		expect(filterCatalogue(all, { priceMax: 1000 }).map((e) => e.slug)).toEqual(['d-poor']);
	});
	it('filters by audio, power and stock', () => {
		expect(filterCatalogue(all, { audio: true }).map((e) => e.slug)).toEqual(['b-close', 'c-fair', 'd-poor']);
		expect(filterCatalogue(all, { power: 'barrel' }).map((e) => e.slug)).toEqual(['a-exact']);
		expect(filterCatalogue(all, { inStock: true }).map((e) => e.slug)).toEqual(['a-exact', 'b-close']);
	});
	it('sorts by band, by price (unpriced last) and by name', () => {
		expect(sortCatalogue(all, 'band').map((e) => e.slug)).toEqual(['a-exact', 'b-close', 'c-fair', 'd-poor']);
		expect(sortCatalogue(all, 'price').map((e) => e.slug)).toEqual(['d-poor', 'b-close', 'a-exact', 'c-fair']);
		expect(sortCatalogue([b, a, d], 'name').map((e) => e.slug)).toEqual(['a-exact', 'b-close', 'd-poor']);
	});
});

describe('rankFinder', () => {
	it('keeps what meets every need and ranks by band, then buyable now, then score, then price', () => {
		const closeCheap = entry('close-cheap', [rev('A', 'close', 80)], { price: 1000 });
		const closeBetter = entry('close-better', [rev('A', 'close', 90)], { price: 1800 });
		const closePreorder = entry('close-preorder', [rev('A', 'close', 95)], { price: 1100, inStock: 0 });
		const exactDear = entry('exact-dear', [rev('A', 'exact', 97)], { price: 3000 });
		const noAudio = entry('no-audio', [rev('A', 'exact', 99)], { price: 1000, hasAudioOut: false });
		const ranked = rankFinder([closeCheap, closeBetter, closePreorder, exactDear, noAudio], {
			region: 'eu',
			budgetMinor: 2000,
			needsAudio: true,
			minBand: 'close'
		});
		expect(ranked.map((r) => r.entry.slug)).toEqual(['close-better', 'close-cheap', 'close-preorder']);
		expect(ranked.map((r) => r.rank)).toEqual([1, 2, 3]);
		expect(rankFinder([closePreorder], { region: 'eu', inStockNow: true })).toEqual([]);
	});

	it('explains each result in words and warns about worse revisions', () => {
		const e = entry('two-revs', [rev('A', 'close', 85), rev('B', 'failing', 30)], { price: 1290, inStock: 2 });
		expect(explainEntry(e, 'eu')).toBe('Close band; in stock at 2 shops in your region; lowest 12.90 EUR');
		const [r] = rankFinder([e], { region: 'eu', minBand: 'close' });
		expect(r.notes.join(' ')).toMatch(/Revision B \(chip C-B\) grades Failing/);
		expect(explainEntry(entry('gone', [rev('A', 'fair', 70)], { price: null }), 'jp')).toBe(
			'Fair band; not buyable in Japan right now'
		);
	});
});

describe('expected grades (predictions for revisions not yet measured)', () => {
	const predicted = (code: string, band: CatalogueRevision['band']): CatalogueRevision => ({
		...rev(code, null, null),
		runs: 0,
		expected: band,
		expectedBasis: 'from 6 runs of this chip in 3 other converters; not yet measured'
	});

	it('count in the band filter and sort only when the visitor includes them', () => {
		const unmeasured = entry('unmeasured', [predicted('A', 'close')]);
		const measuredFair = entry('measured-fair', [rev('A', 'fair', 70)]);
		expect(unmeasured.bestBand).toBeNull();
		expect(unmeasured.expected).toEqual({
			band: 'close',
			basis: 'from 6 runs of this chip in 3 other converters; not yet measured',
			deviationIre: null
		});
		expect(meetsBand(unmeasured, 'close')).toBe(false);
		expect(meetsBand(unmeasured, 'close', true)).toBe(true);
		expect(filterCatalogue([unmeasured, measuredFair], { minBand: 'fair' }).map((e) => e.slug)).toEqual([
			'measured-fair'
		]);
		expect(
			filterCatalogue([measuredFair, unmeasured], { minBand: 'fair', includeExpected: true }).map((e) => e.slug)
		).toEqual(['unmeasured', 'measured-fair']);
		// measured only: the unmeasured one sorts as not graded
		expect(sortCatalogue([unmeasured, measuredFair], 'band').map((e) => e.slug)).toEqual([
			'measured-fair',
			'unmeasured'
		]);
	});

	it('put a measured grade before an expected one of the same band, and say so in the finder', () => {
		const unmeasured = entry('unmeasured', [predicted('A', 'close')], { inStock: 3 });
		const measured = entry('measured', [rev('A', 'close', 80)], { inStock: 0, price: 2000 });
		const ranked = rankFinder([unmeasured, measured], { region: 'eu', includeExpected: true });
		expect(ranked.map((r) => r.entry.slug)).toEqual(['measured', 'unmeasured']);
		expect(ranked[1].explanation).toMatch(/^expected Close band \(not yet measured\)/);
		expect(rankFinder([unmeasured, measured], { region: 'eu', minBand: 'close' }).map((r) => r.entry.slug)).toEqual([
			'measured'
		]);
	});

	it('ignore an expected band once the revision is measured, or when it is not current', () => {
		const measuredToo = { ...predicted('A', 'exact'), band: 'fair' as const, score: 70 };
		expect(leadExpected([measuredToo])).toBeNull();
		const old = { ...predicted('A', 'exact'), seenTo: '2024-01-01' };
		expect(leadExpected([old, rev('B', 'poor', 50)])).toBeNull();
	});
});
