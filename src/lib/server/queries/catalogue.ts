/** Catalogue reads shared by pages and API routes. */
import { asc, eq, isNull } from 'drizzle-orm';
import type { Database } from '../db/client';
import { chips, converters, revisions } from '../db/schema';

export interface ConverterSummary {
	slug: string;
	brand: string;
	name: string;
	hasAudioOut: boolean;
	revisions: Array<{
		code: string;
		chip: string;
		band: (typeof revisions.$inferSelect)['band'];
		score: number | null;
		deviationIre: number | null;
		bandReason: string | null;
		runs: number;
	}>;
}

/** Every live converter with its revisions, chips and cached grades, by brand and model. */
export async function listConverters(db: Database): Promise<ConverterSummary[]> {
	const rows = await db
		.select({
			slug: converters.slug,
			brand: converters.brand,
			model: converters.model,
			hasAudioOut: converters.hasAudioOut,
			code: revisions.code,
			chip: chips.name,
			band: revisions.band,
			score: revisions.score,
			deviationIre: revisions.deviationIre,
			bandReason: revisions.bandReason,
			runs: revisions.runCount
		})
		.from(converters)
		.leftJoin(revisions, eq(revisions.converterId, converters.id))
		.leftJoin(chips, eq(chips.id, revisions.chipId))
		.where(isNull(converters.retiredAt))
		.orderBy(asc(converters.brand), asc(converters.model), asc(revisions.code));
	const bySlug = new Map<string, ConverterSummary>();
	for (const r of rows) {
		let c = bySlug.get(r.slug);
		if (!c) {
			c = { slug: r.slug, brand: r.brand, name: r.model, hasAudioOut: r.hasAudioOut, revisions: [] };
			bySlug.set(r.slug, c);
		}
		if (r.code) c.revisions.push({ code: r.code, chip: r.chip ?? '', band: r.band, score: r.score, deviationIre: r.deviationIre, bandReason: r.bandReason, runs: r.runs ?? 0 });
	}
	return [...bySlug.values()];
}
