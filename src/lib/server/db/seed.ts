/**
 * Loads the invented demo scenario (src/lib/demo/scenario.ts) into a database.
 *
 * Idempotent by design: every row is inserted with ON CONFLICT DO NOTHING on its natural
 * key, and child rows (bench runs, history, teardowns, the guide's picks, the member's watch)
 * are only added for parents this call created. A second run changes nothing, and nothing a
 * user added or edited is touched. The one repair it makes is to cached grades: a revision
 * graded before the band mark's deviation was stored is regraded from its own runs.
 */
import { and, desc, eq, inArray, isNotNull, isNull, sql } from 'drizzle-orm';
import type { Database } from './client';
import { refreshShopRecords } from '../queries/shops';
import * as t from './schema';
import {
	CHIPS,
	CONVERTERS,
	DEMO_GUIDE,
	DEMO_PEOPLE,
	DEMO_RATES_PER_EUR,
	DEMO_WATCH,
	LISTINGS,
	PENDING_MEMBER_RUN,
	PENDING_TEARDOWN,
	SHOPS,
	SHOP_API_MAPPINGS,
	SHOP_SELECTORS,
	TEARDOWNS,
	TESTERS,
	TESTER_REVISIONS,
	demoReadings,
	seededRandom,
	type DemoTeardown,
	type DemoListing
} from '../../demo/scenario';
import { audit } from '../audit';
import { recordBenchRun, regradeRevision } from '../grading';
import { isBuyable } from '../../pricing';
import type { Storage } from '../storage/index';
import { storePhoto } from '../curate/uploads';
import { demoBoardPhoto } from './demo-photo';

export interface SeedOptions {
	/** Base port of the fake shops: shop N listens on shopsPort + its portOffset. */
	shopsPort: number;
	shopsHost?: string;
	/** Days of synthetic price/stock history to generate for new listings (0 for none). */
	historyDays?: number;
	now?: Date;
	/** Object storage for the teardown reports' board photos; without it reports have no photo. */
	storage?: Storage;
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
	teardowns: number;
	guides: number;
	watches: number;
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
		observations: 0,
		teardowns: 0,
		guides: 0,
		watches: 0
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
		for (const tester of TESTERS) {
			const rows = await tx
				.insert(t.users)
				.values({ email: tester.email, name: tester.name, role: 'member', emailVerified: now })
				.onConflictDoNothing({ target: t.users.email })
				.returning({ id: t.users.id });
			summary.users += rows.length;
		}
		const person = async (email: string) =>
			(await tx.select({ id: t.users.id, name: t.users.name }).from(t.users).where(eq(t.users.email, email)))[0];
		const curator = await person(DEMO_PEOPLE.curator.email);
		const member = await person(DEMO_PEOPLE.member.email);
		const testers = await Promise.all(TESTERS.map(async (x) => ({ ...x, user: await person(x.email) })));

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
		const newConverters = new Set<string>();
		/** "converter-slug:code" -> revision id, for every demo revision (new or already there). */
		const revisionIds = new Map<string, number>();
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
			if (created.length) newConverters.add(c.slug);
			const [conv] = await tx.select({ id: t.converters.id }).from(t.converters).where(eq(t.converters.slug, c.slug));
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
				const key = `${c.slug}:${rev.code}`;
				if (inserted.length === 0) {
					// existing revision: leave its runs alone
					const [existing] = await tx
						.select({ id: t.revisions.id })
						.from(t.revisions)
						.where(and(eq(t.revisions.converterId, conv.id), eq(t.revisions.code, rev.code)));
					if (existing) revisionIds.set(key, existing.id);
					continue;
				}
				summary.revisions += 1;
				const revisionId = inserted[0].id;
				revisionIds.set(key, revisionId);
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
				if (TESTER_REVISIONS.includes(key)) {
					for (const [ti, tester] of testers.entries()) {
						const measuredOn = new Date(Date.parse(rev.seenFrom) + (45 + ti * 17) * 86_400_000);
						await recordBenchRun(tx, {
							revisionId,
							status: 'accepted',
							measuredBy: tester.name,
							submittedById: tester.user?.id ?? null,
							measuredOn: measuredOn.toISOString().slice(0, 10),
							testSource: 'FPGA console core, 240p grey ramp',
							instrument: tester.instrument,
							termination: '75-ohm',
							fullScaleMv: 700,
							notes: "Demo bench run by an invented tester (readings include the tester's scope calibration).",
							readings: demoReadings(chip, 10 + ti * 7 + TESTER_REVISIONS.indexOf(key)).map((s) => ({
								ire: s.ire,
								r: Math.round(s.r * tester.scopeGain * 10) / 10,
								g: Math.round(s.g * tester.scopeGain * 10) / 10,
								b: Math.round(s.b * tester.scopeGain * 10) / 10
							}))
						});
						summary.benchRuns += 1;
					}
				}
				if (key === PENDING_MEMBER_RUN.revision && member) {
					await recordBenchRun(tx, {
						revisionId,
						status: 'pending',
						measuredBy: member.name ?? 'Demo member',
						submittedById: member.id,
						measuredOn: new Date(now.getTime() - 5 * 86_400_000).toISOString().slice(0, 10),
						testSource: 'Laptop HDMI out, 480p grey ramp',
						instrument: 'Hobby scope, 50 MHz, 75 ohm feed-through (demo)',
						termination: '75-ohm',
						fullScaleMv: 700,
						notes: 'My first bench run: readings from the cursor readout, one pass.',
						readings: demoReadings(chip, PENDING_MEMBER_RUN.runIndex)
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

		// Teardown reports, only for converters this call created (a second run adds none).
		const chipIdOf = async (converter: string, code: string) => {
			const id = revisionIds.get(`${converter}:${code}`);
			if (!id) return null;
			const [r] = await tx.select({ chipId: t.revisions.chipId }).from(t.revisions).where(eq(t.revisions.id, id));
			return r?.chipId ?? null;
		};
		const reporters = [member, ...testers.map((x) => x.user)].filter((u): u is NonNullable<typeof u> => !!u);
		const addTeardown = async (d: DemoTeardown, i: number, verified: boolean) => {
			const conv = CONVERTERS.find((c) => c.slug === d.converter)!;
			const rev = conv.revisions.find((r) => r.code === d.revision)!;
			const chip = CHIPS.find((c) => c.slug === rev.chip)!;
			const reporter = reporters[i % reporters.length];
			let photoFileId: string | null = null;
			if (opts.storage && reporter) {
				const bytes = await demoBoardPhoto(chip.name, rev.boardMarking, i + 1);
				const photo = await storePhoto(
					tx as unknown as Database,
					opts.storage,
					{ id: reporter.id, role: 'member' },
					{
						name: `${d.converter}-${d.month}.png`,
						bytes
					}
				);
				photoFileId = photo.id;
				if (verified) {
					await tx
						.update(t.files)
						.set({ status: 'public' })
						.where(inArray(t.files.id, [photo.id, photo.thumbnailId]));
				}
			}
			const reviewedAt = new Date(Date.parse(`${d.month}-01`) + 40 * 86_400_000);
			const [row] = await tx
				.insert(t.teardownReports)
				.values({
					converterId: converterIds.get(d.converter)!,
					revisionId: revisionIds.get(`${d.converter}:${d.revision}`) ?? null,
					shopId: shopIds.get(d.shop)?.id ?? null,
					purchaseMonth: `${d.month}-01`,
					chipId: await chipIdOf(d.converter, d.revision),
					chipText: chip.name,
					boardMarking: rev.boardMarking,
					photoFileId,
					notes: d.notes ?? `Opened after a month of use; ${chip.name} on a board marked ${rev.boardMarking}.`,
					status: verified ? 'verified' : 'pending',
					submittedById: reporter?.id ?? null,
					reviewReason: verified ? 'Marking readable in the photo and matches the revision.' : null,
					reviewedById: verified ? (curator?.id ?? null) : null,
					reviewedAt: verified ? (reviewedAt < now ? reviewedAt : now) : null
				})
				.returning();
			await audit(tx, {
				actorId: reporter?.id ?? null,
				action: 'submitted',
				entity: 'teardown_report',
				entityId: row.id,
				after: row
			});
			if (verified) {
				await audit(tx, {
					actorId: curator?.id ?? null,
					action: 'verified',
					entity: 'teardown_report',
					entityId: row.id,
					after: row,
					reason: row.reviewReason ?? undefined
				});
			}
			summary.teardowns += 1;
		};
		for (const [i, d] of TEARDOWNS.entries()) {
			if (newConverters.has(d.converter)) await addTeardown(d, i, true);
		}
		if (newConverters.has(PENDING_TEARDOWN.converter)) await addTeardown(PENDING_TEARDOWN, TEARDOWNS.length, false);

		// The published guide; its picks only when this call created it.
		const [guide] = await tx
			.insert(t.guides)
			.values({
				slug: DEMO_GUIDE.slug,
				title: DEMO_GUIDE.title,
				summary: DEMO_GUIDE.summary,
				bodyMarkdown: DEMO_GUIDE.bodyMarkdown,
				status: 'published',
				authorId: curator?.id ?? null,
				publishedAt: new Date(now.getTime() - 60 * 86_400_000)
			})
			.onConflictDoNothing({ target: t.guides.slug })
			.returning();
		if (guide) {
			summary.guides += 1;
			const picks = DEMO_GUIDE.picks
				.filter((p) => converterIds.has(p.converter))
				.map((p, position) => ({
					guideId: guide.id,
					converterId: converterIds.get(p.converter)!,
					position,
					note: p.note,
					bandAtPick: p.bandAtPick
				}));
			if (picks.length) await tx.insert(t.guidePicks).values(picks);
			await audit(tx, {
				actorId: curator?.id ?? null,
				action: 'published',
				entity: 'guide',
				entityId: guide.id,
				after: { ...guide, picks }
			});
		}

		// The demo member's watch, with an alert queued for the latest restock of the watched
		// converter (the jobs' sender delivers it to the local inbox). Needs seeded history.
		const watched = converterIds.get(DEMO_WATCH.converter);
		if (member && watched && (opts.historyDays ?? 90) > 0) {
			const [has] = await tx
				.select({ id: t.watches.id })
				.from(t.watches)
				.where(eq(t.watches.userId, member.id))
				.limit(1);
			if (!has) {
				const [watch] = await tx
					.insert(t.watches)
					.values({ userId: member.id, converterId: watched })
					.returning({ id: t.watches.id });
				summary.watches += 1;
				// the latest restock of a listing still in stock (a sell-out since would skip the alert)
				const [restock] = await tx
					.select({ id: t.stockEvents.id })
					.from(t.stockEvents)
					.innerJoin(t.listings, eq(t.listings.id, t.stockEvents.listingId))
					.innerJoin(t.listingStates, eq(t.listingStates.listingId, t.listings.id))
					.where(
						and(
							eq(t.listings.converterId, watched),
							eq(t.stockEvents.kind, 'restock'),
							eq(t.listingStates.currentStock, 'in_stock')
						)
					)
					.orderBy(desc(t.stockEvents.at))
					.limit(1);
				if (restock) {
					await tx
						.insert(t.alertOutbox)
						.values({ watchId: watch.id, stockEventId: restock.id, userId: member.id, nextAttemptAt: now })
						.onConflictDoNothing();
				}
			}
		}

		// Cached grades from before the band mark stored its deviation: regrade from their own runs.
		const stale = await tx
			.select({ id: t.revisions.id })
			.from(t.revisions)
			.where(and(isNotNull(t.revisions.band), isNull(t.revisions.deviationIre)));
		for (const r of stale) await regradeRevision(tx, r.id, now);
	});
	// Listing rows show each shop's stored record line; the jobs process keeps it current.
	await refreshShopRecords(db, now);

	return summary;
}

/**
 * Deterministic synthetic history for one listing: a few sell-outs, restocks and price moves
 * over `days`, ending in the scenario's current state at `now`.
 */
export function demoHistory(l: DemoListing, days: number, now: Date) {
	const points: { at: Date; priceMinor: number; stock: t.StockState }[] = [];
	if (days <= 0) return [{ at: now, priceMinor: l.priceMinor, stock: l.stock }];
	if (l.spells) return spellHistory(l, days, now);
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
		// the change to today's state lands a few hours to two days ago, not at one shared instant
		points.push({
			at: new Date(Math.max(last.at.getTime() + 3_600_000, now.getTime() - (3 + Math.floor(rand() * 45)) * 3_600_000)),
			priceMinor: l.priceMinor,
			stock: l.stock
		});
	}
	return points;
}

/**
 * History with `l.spells` finished out-of-stock spells: in stock, sold out for a while,
 * back in stock (often at a new price), over `days`; then the scenario's current state.
 */
function spellHistory(l: DemoListing, days: number, now: Date) {
	const rand = seededRandom(l.path.length * 104_729 + l.priceMinor);
	const dayMs = 86_400_000;
	const start = now.getTime() - days * dayMs;
	const span = (days - 2) * dayMs;
	const spells = l.spells ?? 0;
	const seg = span / spells;
	let price = Math.round(l.priceMinor * (1.03 + rand() * 0.06));
	const points: { at: Date; priceMinor: number; stock: t.StockState }[] = [
		{ at: new Date(start), priceMinor: price, stock: 'in_stock' }
	];
	for (let i = 0; i < spells; i++) {
		const segStart = start + i * seg;
		// in stock for 35-65 % of the segment, with a price move half the time
		const soldOut = segStart + seg * (0.35 + rand() * 0.3);
		if (rand() < 0.5) {
			price = Math.round(price * (0.94 + rand() * 0.1));
			points.push({ at: new Date(segStart + (soldOut - segStart) / 2), priceMinor: price, stock: 'in_stock' });
		}
		points.push({ at: new Date(soldOut), priceMinor: price, stock: 'out_of_stock' });
		const back = segStart + seg * (0.8 + rand() * 0.15);
		if (rand() < 0.6) price = Math.round(price * (0.95 + rand() * 0.08));
		points.push({ at: new Date(back), priceMinor: price, stock: 'in_stock' });
	}
	const last = points[points.length - 1];
	if (last.stock !== l.stock || last.priceMinor !== l.priceMinor) {
		// the change to today's state lands a few hours to two days ago, not at one shared instant
		points.push({
			at: new Date(Math.max(last.at.getTime() + 3_600_000, now.getTime() - (3 + Math.floor(rand() * 45)) * 3_600_000)),
			priceMinor: l.priceMinor,
			stock: l.stock
		});
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
			(select count(*)::int from exchange_rate) as exchange_rates,
			(select count(*)::int from teardown_report) as teardown_reports,
			(select count(*)::int from guide) as guides,
			(select count(*)::int from watch) as watches,
			(select count(*)::int from alert_outbox) as alert_outbox,
			(select count(*)::int from audit_log) as audit_log
	`);
	return row;
}
