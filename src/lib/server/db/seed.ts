/**
 * Loads the invented demo scenario (src/lib/demo/scenario.ts) into a database.
 *
 * Idempotent by design: every row is inserted with ON CONFLICT DO NOTHING on its natural
 * key, and child rows (bench runs, history) are only added for parents this call created.
 * A second run changes nothing, and nothing a user added or edited is touched.
 */
import { and, eq, sql } from 'drizzle-orm';
import type { Database } from './client';
import * as t from './schema';
import {
	CHIPS,
	CONVERTERS,
	DEMO_PEOPLE,
	DEMO_RATES_PER_EUR,
	LISTINGS,
	SHOPS,
	SHOP_API_MAPPINGS,
	SHOP_SELECTORS,
	demoReadings,
	seededRandom,
	type DemoListing
} from '../../demo/scenario';
import { recordBenchRun, regradeRevision } from '../grading';
import { isBuyable } from '../../pricing';

export interface SeedOptions {
	/** Base port of the fake shops: shop N listens on shopsPort + its portOffset. */
	shopsPort: number;
	shopsHost?: string;
	/** Days of synthetic price/stock history to generate for new listings (0 for none). */
	historyDays?: number;
	now?: Date;
}

export interface SeedSummary {
	users: number;
	chips: number;
	converters: number;
	revisions: number;
	benchRuns: number;
	shops: number;
	listings: number;
	observations: number;
}

/** Base URL of one fake shop. */
export function shopBaseUrl(offset: number, opts: Pick<SeedOptions, 'shopsPort' | 'shopsHost'>) {
	return `http://${opts.shopsHost ?? '127.0.0.1'}:${opts.shopsPort + offset}`;
}

export async function seedDemo(db: Database, opts: SeedOptions): Promise<SeedSummary> {
	const now = opts.now ?? new Date();
	const summary: SeedSummary = {
		users: 0,
		chips: 0,
		converters: 0,
		revisions: 0,
		benchRuns: 0,
		shops: 0,
		listings: 0,
		observations: 0
	};

	await db.transaction(async (tx) => {
		// People: roles are set only when the row is created, never overwritten.
		for (const [role, person] of Object.entries(DEMO_PEOPLE) as [t.Role, { email: string; name: string }][]) {
			const rows = await tx
				.insert(t.users)
				.values({ email: person.email, name: person.name, role, emailVerified: now })
				.onConflictDoNothing({ target: t.users.email })
				.returning({ id: t.users.id });
			summary.users += rows.length;
		}
		const [curator] = await tx
			.select({ id: t.users.id, name: t.users.name })
			.from(t.users)
			.where(eq(t.users.email, DEMO_PEOPLE.curator.email));

		const chipIds = new Map<string, number>();
		for (const chip of CHIPS) {
			const rows = await tx
				.insert(t.chips)
				.values({ slug: chip.slug, name: chip.name, maker: chip.maker, notes: chip.notes })
				.onConflictDoNothing({ target: t.chips.slug })
				.returning({ id: t.chips.id });
			summary.chips += rows.length;
			const [row] = await tx.select({ id: t.chips.id }).from(t.chips).where(eq(t.chips.slug, chip.slug));
			chipIds.set(chip.slug, row.id);
		}

		const converterIds = new Map<string, number>();
		for (const c of CONVERTERS) {
			const created = await tx
				.insert(t.converters)
				.values({
					slug: c.slug,
					brand: c.brand,
					model: c.model,
					summary: c.summary,
					hasAudioOut: c.hasAudioOut,
					power: c.power,
					outputs: c.outputs,
					lastReviewedAt: now
				})
				.onConflictDoNothing({ target: t.converters.slug })
				.returning({ id: t.converters.id });
			summary.converters += created.length;
			const [conv] = await tx
				.select({ id: t.converters.id })
				.from(t.converters)
				.where(eq(t.converters.slug, c.slug));
			converterIds.set(c.slug, conv.id);

			for (const rev of c.revisions) {
				const chip = CHIPS.find((ch) => ch.slug === rev.chip)!;
				const inserted = await tx
					.insert(t.revisions)
					.values({
						converterId: conv.id,
						code: rev.code,
						chipId: chipIds.get(rev.chip)!,
						boardMarking: rev.boardMarking,
						seenFrom: rev.seenFrom,
						seenTo: rev.seenTo
					})
					.onConflictDoNothing()
					.returning({ id: t.revisions.id });
				if (inserted.length === 0) continue; // existing revision: leave its runs alone
				summary.revisions += 1;
				const revisionId = inserted[0].id;
				for (let i = 0; i < rev.runs; i++) {
					const measuredOn = new Date(Date.parse(rev.seenFrom) + (30 + i * 21) * 86_400_000);
					await recordBenchRun(tx, {
						revisionId,
						status: 'accepted',
						measuredBy: curator?.name ?? 'Demo curator',
						submittedById: curator?.id ?? null,
						measuredOn: measuredOn.toISOString().slice(0, 10),
						testSource: i % 2 === 0 ? 'FPGA console core, 240p grey ramp' : 'Laptop HDMI out, 480p grey ramp',
						instrument: 'Bench scope, 100 MHz, 10x probe (demo)',
						termination: '75-ohm',
						fullScaleMv: 700,
						notes: 'Demo bench run (invented readings).',
						readings: demoReadings(chip, i)
					});
					summary.benchRuns += 1;
				}
				await regradeRevision(tx, revisionId, now);
			}
		}

		const shopIds = new Map<string, { id: number; currency: string; baseUrl: string }>();
		for (const s of SHOPS) {
			const baseUrl = shopBaseUrl(s.portOffset, opts);
			const selectors = SHOP_SELECTORS[s.slug];
			const feedConfig =
				s.format === 'api' && SHOP_API_MAPPINGS[s.slug]
					? { apiMapping: SHOP_API_MAPPINGS[s.slug] }
					: selectors
						? { selectors }
						: {};
			const rows = await tx
				.insert(t.shops)
				.values({
					slug: s.slug,
					name: s.name,
					region: s.region,
					currency: s.currency,
					shipsTo: s.shipsTo,
					baseUrl,
					defaultFormat: s.format,
					feedConfig,
					maxConcurrency: 2,
					minSpacingMs: 250
				})
				.onConflictDoNothing({ target: t.shops.slug })
				.returning({ id: t.shops.id });
			summary.shops += rows.length;
			const [shop] = await tx
				.select({ id: t.shops.id, baseUrl: t.shops.baseUrl })
				.from(t.shops)
				.where(eq(t.shops.slug, s.slug));
			shopIds.set(s.slug, { id: shop.id, currency: s.currency, baseUrl: shop.baseUrl });
		}

		for (const l of LISTINGS) {
			const shop = shopIds.get(l.shop)!;
			const shopDef = SHOPS.find((s) => s.slug === l.shop)!;
			const url = shop.baseUrl + l.path;
			const rows = await tx
				.insert(t.listings)
				.values({
					shopId: shop.id,
					converterId: converterIds.get(l.converter)!,
					url,
					format: shopDef.format,
					pollIntervalMinutes: 30
				})
				.onConflictDoNothing({ target: t.listings.url })
				.returning({ id: t.listings.id });
			if (rows.length === 0) continue;
			summary.listings += 1;
			const listingId = rows[0].id;
			const history = demoHistory(l, opts.historyDays ?? 90, now);
			let previous: (typeof history)[number] | null = null;
			for (const point of history) {
				const [obs] = await tx
					.insert(t.observations)
					.values({
						listingId,
						observedAt: point.at,
						priceMinor: point.priceMinor,
						currency: shop.currency,
						stock: point.stock
					})
					.returning({ id: t.observations.id });
				summary.observations += 1;
				if (previous) {
					const wasBuyable = isBuyable(previous.stock);
					const nowBuyable = isBuyable(point.stock);
					const kind = !wasBuyable && nowBuyable ? 'restock' : wasBuyable && !nowBuyable ? 'sellout' : null;
					if (kind) {
						await tx.insert(t.stockEvents).values({
							listingId,
							observationId: obs.id,
							kind,
							at: point.at,
							priceMinor: point.priceMinor,
							currency: shop.currency,
							previousStock: previous.stock
						});
					}
				}
				previous = point;
			}
			const last = history[history.length - 1];
			await tx.insert(t.listingStates).values({
				listingId,
				nextPollAt: now,
				currentPriceMinor: last?.priceMinor ?? null,
				currentCurrency: last ? shop.currency : null,
				currentStock: last?.stock ?? 'unknown',
				currentSince: last?.at ?? null
			});
		}

		// Rates are added only for currencies with no rate yet: an admin's rates are never touched.
		const day = now.toISOString().slice(0, 10);
		for (const [quote, rate] of Object.entries(DEMO_RATES_PER_EUR)) {
			const known = await tx
				.select({ day: t.exchangeRates.day })
				.from(t.exchangeRates)
				.where(and(eq(t.exchangeRates.base, 'EUR'), eq(t.exchangeRates.quote, quote)))
				.limit(1);
			if (known.length) continue;
			await tx.insert(t.exchangeRates).values({ base: 'EUR', quote, day, rate: String(rate), source: 'demo' });
		}
	});

	return summary;
}


/**
 * Deterministic synthetic history for one listing: a few sell-outs, restocks and price moves
 * over `days`, ending in the scenario's current state at `now`.
 */
export function demoHistory(l: DemoListing, days: number, now: Date) {
	const points: { at: Date; priceMinor: number; stock: t.StockState }[] = [];
	if (days <= 0) return [{ at: now, priceMinor: l.priceMinor, stock: l.stock }];
	const rand = seededRandom(l.path.length * 7919 + l.priceMinor);
	const dayMs = 86_400_000;
	let at = now.getTime() - days * dayMs;
	let price = Math.round(l.priceMinor * (1.04 + rand() * 0.08));
	let stock: t.StockState = 'in_stock';
	points.push({ at: new Date(at), priceMinor: price, stock });
	while (true) {
		at += (2 + rand() * 12) * dayMs;
		if (at >= now.getTime() - dayMs) break;
		if (rand() < 0.6) {
			stock = stock === 'in_stock' ? 'out_of_stock' : 'in_stock';
		} else {
			price = Math.round(price * (0.95 + rand() * 0.08));
		}
		points.push({ at: new Date(at), priceMinor: price, stock });
	}
	const last = points[points.length - 1];
	if (last.stock !== l.stock || last.priceMinor !== l.priceMinor) {
		points.push({ at: new Date(now.getTime() - 6 * 3_600_000), priceMinor: l.priceMinor, stock: l.stock });
	}
	return points;
}

/** Row counts of the seeded tables (used by the idempotency test and the start banner). */
export async function countRows(db: Database) {
	const [row] = await db.execute<{ [k: string]: number }>(sql`
		select
			(select count(*)::int from "user") as users,
			(select count(*)::int from chip) as chips,
			(select count(*)::int from converter) as converters,
			(select count(*)::int from revision) as revisions,
			(select count(*)::int from bench_run) as bench_runs,
			(select count(*)::int from bench_reading) as bench_readings,
			(select count(*)::int from shop) as shops,
			(select count(*)::int from listing) as listings,
			(select count(*)::int from observation) as observations,
			(select count(*)::int from stock_event) as stock_events,
			(select count(*)::int from exchange_rate) as exchange_rates
	`);
	return row;
}

