import { listingsQuery as params } from '$lib/server/api/contract';
import { outlookJson, type ListingRowJson } from '$lib/server/api/listing-json';
import { db } from '$lib/server/db';
import { loadListings } from '$lib/server/queries/public';
import { listingNotes } from '$lib/server/queries/shops';
import { searchObject, viewpoint } from '$lib/server/queries/public-params';
import { badRequest, cachedJson, notFound } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

/** Current state of every listing of one converter (all regions). */
export const GET: RequestHandler = async ({ url, request }) => {
	const parsed = params.safeParse(searchObject(url));
	if (!parsed.success) return badRequest(parsed.error);
	const view = viewpoint(parsed.data, null, request.headers.get('accept-language'));
	const listings = await loadListings(db, parsed.data.converter, view);
	if (!listings) return notFound('converter');
	const notes = await listingNotes(
		db,
		listings.map((l) => l.listingId)
	);
	return cachedJson(request, {
		converter: parsed.data.converter,
		region: view.region,
		currency: view.currency,
		listings: listings.map((l): ListingRowJson => ({
			id: l.listingId,
			shop: { slug: l.shopSlug, name: l.shopName, region: l.shopRegion, shipsTo: l.shipsTo },
			url: l.url,
			stock: l.stock,
			price: l.priceMinor != null && l.currency ? { minor: l.priceMinor, currency: l.currency } : null,
			displayPrice: l.displayMinor != null ? { minor: l.displayMinor, currency: l.displayCurrency } : null,
			servesRegion: l.servesViewer,
			lastCheckedAt: l.lastCheckedAt,
			// Kaplan-Meier medians in hours with the finished spells behind them; text null under 3 spells.
			outlook: outlookJson(notes.get(l.listingId)?.outlook),
			shopRecord: { line: notes.get(l.listingId)?.shop.line ?? null, page: `/shops/${l.shopSlug}` },
			history: `/api/v1/listings/${l.listingId}/history`
		}))
	});
};
