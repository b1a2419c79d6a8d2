/**
 * A generated catalogue for the page benchmark and the read-model tests: converters numbered
 * from `start` (1 or 2 graded revisions each, one accepted bench run with readings per revision),
 * `per` listings each across the demo shops, and `historyPoints` change points per listing about
 * 9 days apart (41 = a year). Invented names only (Benchbrand N, Model N). Plain SQL for speed;
 * calling it again with a later `start` grows the catalogue.
 */
import type { Sql } from 'postgres';
import { analyzeLevels } from '../../src/lib/levels/index';
import { CHIPS, DEMO_RATES_PER_EUR, SHOPS, demoReadings } from '../../src/lib/demo/scenario';

export interface BenchCatalogueOptions {
	converters: number;
	per: number;
	historyPoints?: number;
	start?: number;
}

export async function loadBenchCatalogue(sql: Sql, o: BenchCatalogueOptions): Promise<void> {
	const first = o.start ?? 0;
	const end = first + o.converters;
	const points = o.historyPoints ?? 41;
	const [{ chips }] = await sql<{ chips: number }[]>`select count(*)::int as chips from chip`;
	if (chips === 0) {
		for (const c of CHIPS)
			await sql`insert into chip (slug, name, maker, notes) values (${c.slug}, ${c.name}, ${c.maker}, ${c.notes})`;
		for (const s of SHOPS)
			await sql`
				insert into shop (slug, name, region, currency, ships_to, base_url, default_format)
				values (${s.slug}, ${s.name}, ${s.region}, ${s.currency}, ${sql.array(s.shipsTo)}::region[], ${'http://127.0.0.1:9'}, ${s.format})`;
		for (const [quote, rate] of Object.entries(DEMO_RATES_PER_EUR))
			await sql`insert into exchange_rate (base, quote, day, rate, source) values ('EUR', ${quote}, current_date - 1, ${String(rate)}, 'bench')`;
	}
	const chipRows = await sql<{ id: number; slug: string }[]>`select id, slug from chip`;
	const chipId = new Map(chipRows.map((r) => [r.slug, r.id]));
	// One stored report per chip: the engine's output for the demo readings.
	const graded = CHIPS.filter((c) => chipId.has(c.slug)).map((c) => {
		const readings = demoReadings(c, 0);
		return { chip: c.slug, readings, report: analyzeLevels({ steps: readings, fullScaleMv: 700 }) };
	});
	const [{ before }] = await sql<{ before: number }[]>`select coalesce(max(id), 0)::int as before from converter`;

	const powers = ['usb-bus', 'usb-adapter', 'barrel'];
	for (let start = first; start < end; start += 500) {
		const batch = Array.from({ length: Math.min(500, end - start) }, (_, k) => start + k);
		const convRows = await sql<{ id: number }[]>`
			insert into converter ${sql(
				batch.map((i) => ({
					slug: `bench-box-${i}`,
					brand: `Benchbrand ${i % 97}`,
					model: `Model ${i}`,
					summary: 'Generated for the page benchmark.',
					has_audio_out: i % 2 === 0,
					power: powers[i % 3],
					last_reviewed_at: new Date().toISOString()
				}))
			)} returning id`;
		const revs: Array<Record<string, unknown>> = [];
		convRows.forEach((c, k) => {
			const i = batch[k];
			for (let r = 0; r < (i % 3 === 0 ? 2 : 1); r++) {
				const g = graded[(i + r) % graded.length];
				revs.push({
					converter_id: c.id,
					code: String.fromCharCode(65 + r),
					chip_id: chipId.get(g.chip),
					band: g.report.band,
					score: g.report.score,
					score_min: g.report.score,
					score_max: g.report.score,
					run_count: 1,
					rubric_version: g.report.rubricVersion,
					graded_at: new Date().toISOString()
				});
			}
		});
		const revRows = await sql<
			{ id: number; chip_id: number }[]
		>`insert into revision ${sql(revs as never)} returning id, chip_id`;
		const byChip = new Map(graded.map((g) => [chipId.get(g.chip)!, g]));
		const runs = revRows.map((r) => {
			const g = byChip.get(r.chip_id)!;
			return {
				revision_id: r.id,
				status: 'accepted',
				measured_by: 'Bench generator',
				measured_on: '2026-01-15',
				test_source: 'generated',
				instrument: 'generated',
				report: JSON.stringify(g.report),
				band: g.report.band,
				score: g.report.score,
				rubric_version: g.report.rubricVersion
			};
		});
		const runRows = await sql<
			{ id: number; revision_id: number }[]
		>`insert into bench_run ${sql(runs as never)} returning id, revision_id`;
		const chipOfRev = new Map(revRows.map((r) => [r.id, r.chip_id]));
		const readings = runRows.flatMap((run) =>
			byChip
				.get(chipOfRev.get(run.revision_id)!)!
				.readings.map((s) => ({ bench_run_id: run.id, ire: s.ire, r_mv: s.r, g_mv: s.g, b_mv: s.b }))
		);
		await sql`insert into bench_reading ${sql(readings as never)}`;
	}

	// Listings of the new converters across the shops; a year of change points and the state, in SQL.
	const shopCount = SHOPS.length;
	await sql`
		insert into listing (shop_id, converter_id, url, format, poll_interval_minutes)
		select s.id, c.id, 'http://127.0.0.1:9/' || c.slug || '/' || k, s.default_format, 60
		from converter c
		cross join generate_series(0, ${o.per - 1}) k
		join lateral (select id, default_format from shop order by id offset (k % ${shopCount}) limit 1) s on true
		where c.id > ${before}`;
	// Price wanders, stock flips.
	await sql`
		insert into observation (listing_id, observed_at, price_minor, currency, stock)
		select l.id, now() - interval '365 days' + (d * interval '9 days') + ((l.id % 24) * interval '1 hour'),
		       (case when s.currency = 'JPY' then 2000 else 1200 end) + ((l.id * 37 + d * 11) % 900),
		       s.currency,
		       (case when (l.id + d) % 3 = 0 then 'out_of_stock' else 'in_stock' end)::stock_state
		from listing l join shop s on s.id = l.shop_id
		cross join generate_series(0, ${points - 1}) d
		where l.converter_id > ${before}`;
	await sql`
		insert into listing_state (listing_id, next_poll_at, current_price_minor, current_currency, current_stock, current_since, last_checked_at, last_success_at)
		select distinct on (o.listing_id) o.listing_id, now() + interval '1 day', o.price_minor, o.currency, o.stock, o.observed_at, now(), now()
		from observation o join listing l on l.id = o.listing_id
		where l.converter_id > ${before}
		order by o.listing_id, o.observed_at desc`;
	await sql`
		insert into stock_event (listing_id, observation_id, kind, at, price_minor, currency, previous_stock)
		select listing_id, id, 'restock', observed_at, price_minor, currency, 'out_of_stock'
		from (
			select o.*, lag(o.stock) over (partition by o.listing_id order by o.observed_at) as prev
			from observation o join listing l on l.id = o.listing_id where l.converter_id > ${before}
		) x
		where stock = 'in_stock' and prev = 'out_of_stock'`;
}
