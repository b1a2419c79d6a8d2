import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import postgres from 'postgres';
import { applyMigrations } from '../../src/lib/server/db/migrate';
import { createEmptyDatabase } from './helpers/db';

describe('migrations', () => {
	let url: string;
	let sql: postgres.Sql;

	beforeAll(async () => {
		url = await createEmptyDatabase('sg_it_migrations');
		await applyMigrations(url);
		sql = postgres(url, { max: 1, onnotice: () => {} });
	});
	afterAll(async () => sql?.end());

	it('create every table of the domain on an empty database', async () => {
		const rows = await sql<{ table_name: string }[]>`
			select table_name from information_schema.tables where table_schema = 'public' order by 1`;
		const names = rows.map((r) => r.table_name);
		for (const table of [
			'user',
			'account',
			'session',
			'verificationToken',
			'member_pref',
			'chip',
			'converter',
			'revision',
			'bench_run',
			'bench_reading',
			'file',
			'shop',
			'listing',
			'listing_state',
			'observation',
			'stock_event',
			'poll_count',
			'exchange_rate',
			'teardown_report',
			'watch',
			'alert_outbox',
			'guide',
			'guide_pick',
			'audit_log'
		]) {
			expect(names, `table ${table}`).toContain(table);
		}
	});

	it('apply a second time as a no-op', async () => {
		await expect(applyMigrations(url)).resolves.toBeUndefined();
	});

	it('reject readings outside -100..2000 mV and IRE steps that are not multiples of 10', async () => {
		await sql`insert into chip (slug, name, maker) values ('c', 'C', 'M')`;
		await sql`insert into converter (slug, brand, model) values ('x-one', 'X', 'One')`;
		const [rev] = await sql`insert into revision (converter_id, code, chip_id)
			select c.id, 'A', ch.id from converter c, chip ch returning id`;
		const [run] = await sql`insert into bench_run (revision_id, measured_by, measured_on, test_source, instrument)
			values (${rev.id}, 'tester', '2026-01-01', 'src', 'scope') returning id`;
		await expect(sql`insert into bench_reading values (${run.id}, 15, 1, 1, 1)`).rejects.toThrow(
			/bench_reading_ire_step/
		);
		await expect(sql`insert into bench_reading values (${run.id}, 10, -150, 70, 70)`).rejects.toThrow(
			/bench_reading_mv_range/
		);
		// a black a few mV below blanking is a reading (the level engine's rubric sets the tolerance)
		await sql`insert into bench_reading values (${run.id}, 0, -5, -2, 0)`;
		await expect(sql`insert into bench_reading values (${run.id}, 10, 70, 70, 2500)`).rejects.toThrow(
			/bench_reading_mv_range/
		);
		await sql`insert into bench_reading values (${run.id}, 10, 70, 70, 70)`;
		await expect(sql`insert into bench_reading values (${run.id}, 10, 71, 71, 71)`).rejects.toThrow(/duplicate key/);
	});

	it('0010 strips the offer list from card entries stored before it, and keeps the best offer', async () => {
		const [conv] = await sql`insert into converter (slug, brand, model) values ('x-card', 'X', 'Card') returning id`;
		const best = { listingId: 7, stock: 'in_stock', priceMinor: 1999, currency: 'EUR' };
		const entry = { id: conv.id, slug: 'x-card', best, offers: [best, { ...best, listingId: 8 }], inStockShops: 1 };
		await sql`insert into converter_card (region, converter_id, slug, brand, model, has_audio_out, power,
				band_rank, score, buyable, in_stock_shops, entry)
			values ('eu', ${conv.id}, 'x-card', 'X', 'Card', true, 'usb-bus', 0, 90, 0, 1, ${sql.json(entry)})`;
		await sql.unsafe(readFileSync('drizzle/0010_card_entry_without_offers.sql', 'utf8'));
		const [card] = await sql`select entry from converter_card where converter_id = ${conv.id}`;
		const { offers: _dropped, ...kept } = entry;
		expect(card.entry).toEqual(kept);
	});

	it('0017 counts the cards stored before it, region by region, and runs again safely', async () => {
		const [conv] = await sql`insert into converter (slug, brand, model) values ('x-count', 'X', 'Count') returning id`;
		for (const region of ['eu', 'jp'])
			await sql`insert into converter_card (region, converter_id, slug, brand, model, has_audio_out, power,
					band_rank, score, buyable, in_stock_shops, entry)
				values (${region}, ${conv.id}, 'x-count', 'X', 'Count', true, 'usb-bus', 0, 90, 0, 1, '{}')`;
		// as if the cards had been written before the counts existed
		await sql`update region_card_count set cards = 0`;
		await sql.unsafe(readFileSync('drizzle/0017_region_card_count.sql', 'utf8'));
		const counts = await sql`select c.region::text as region, c.cards from region_card_count c order by c.region`;
		const [{ n }] = await sql`select count(*)::int as n from converter_card where region = 'eu'`;
		expect(counts).toEqual([
			{ region: 'na', cards: 0 },
			{ region: 'eu', cards: n },
			{ region: 'uk', cards: 0 },
			{ region: 'jp', cards: 1 },
			{ region: 'au', cards: 0 }
		]);
	});

	it('0020 has the long read-model columns compressed with lz4 where the server has it', async () => {
		// pg_settings lists lz4 among default_toast_compression's values only on a server built with it
		const [{ lz4 }] =
			await sql`select 'lz4' = any(enumvals) as lz4 from pg_settings where name = 'default_toast_compression'`;
		const columns = await sql`select attrelid::regclass::text as tbl, attname as col, attcompression as method
			from pg_attribute where (attrelid = 'converter_card'::regclass and attname in ('card_html', 'entry', 'api_item'))
				or (attrelid = 'converter_detail'::regclass and attname in ('doc', 'runs', 'revisions_html'))
			order by 1, 2`;
		expect(columns).toHaveLength(6);
		for (const c of columns) expect(c.method, `${c.tbl}.${c.col}`).toBe(lz4 ? 'l' : '');
		const [conv] = await sql`insert into converter (slug, brand, model) values ('x-lz4', 'X', 'Lz4') returning id`;
		const html = '<li class="card">'.repeat(400); // 6.8 kB, past the 2 kB where PostgreSQL compresses
		await sql`insert into converter_card (region, converter_id, slug, brand, model, has_audio_out, power,
				band_rank, score, buyable, in_stock_shops, entry, card_html)
			values ('eu', ${conv.id}, 'x-lz4', 'X', 'Lz4', true, 'usb-bus', 0, 90, 0, 1, '{}', ${html})`;
		const [stored] = await sql`select pg_column_compression(card_html) as method, card_html = ${html} as same
			from converter_card where converter_id = ${conv.id}`;
		expect(stored).toEqual({ method: lz4 ? 'lz4' : 'pglz', same: true });
	});

	it('reject a stock state or band outside the enums', async () => {
		await expect(sql`select 'sold'::stock_state`).rejects.toThrow(/invalid input value/);
		await expect(sql`select 'great'::band`).rejects.toThrow(/invalid input value/);
		const states = await sql`select unnest(enum_range(null::stock_state))::text as s`;
		expect(states.map((r) => r.s)).toEqual([
			'in_stock',
			'out_of_stock',
			'preorder',
			'backorder',
			'discontinued',
			'unknown'
		]);
	});
});
