// The guide's own listing-history route (the page's fallback when /api/v1/listings/[id]/history
// does not answer): only listings of this converter.
import { json } from '@sveltejs/kit';
import { and, eq } from 'drizzle-orm';
import { z } from 'zod';
import { db } from '$lib/server/db';
import { converters, listings } from '$lib/server/db/schema';
import { listingHistory } from '$lib/server/queries/public-history';
import { historyRangeSchema, searchObject } from '$lib/server/queries/public-params';
import { badRequest, notFound } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

const schema = z.object({
	listing: z.coerce.number().int().positive(),
	range: historyRangeSchema.default('90d'),
	points: z.coerce.number().int().min(2).max(2000).default(400)
});

export const GET: RequestHandler = async ({ params, url }) => {
	const parsed = schema.safeParse(searchObject(url));
	if (!parsed.success) return badRequest(parsed.error);
	const [hit] = await db
		.select({ id: listings.id })
		.from(listings)
		.innerJoin(converters, eq(converters.id, listings.converterId))
		.where(and(eq(listings.id, parsed.data.listing), eq(converters.slug, params.slug)));
	if (!hit) return notFound('listing');
	return json(await listingHistory(db, hit.id, parsed.data.range, parsed.data.points));
};
