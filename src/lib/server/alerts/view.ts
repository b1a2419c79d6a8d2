/**
 * Gathers the facts an alert e-mail states (AlertView) for outbox rows, from the database:
 * the stock event, its listing and shop, the converter's band and a bench finding, and how
 * long the listing's previous restock lasted.
 */
import { sql } from 'drizzle-orm';
import type { Band } from '../../components/bands';
import { convertMinor, REGION_CURRENCY, type RatesPerEur, type Region } from '../../pricing';
import { rowsOf, type Db } from './db';
import type { AlertView } from './message';

export interface OutboxContext {
	outboxId: number;
	attempts: number;
	messageId: string | null;
	mode: 'instant' | 'digest';
	watchId: number;
	userId: string;
	email: string | null;
	paused: boolean;
	eventId: number;
	listingId: number;
	/** A sell-out of the listing after this event: the alert would be stale. */
	soldOutSince: Date | null;
	quiet: { quietFrom: number | null; quietTo: number | null; timezone: string } | null;
	view: AlertView;
}

interface Row {
	outbox_id: number;
	attempts: number;
	message_id: string | null;
	mode: 'instant' | 'digest';
	watch_id: number;
	user_id: string;
	email: string | null;
	paused: boolean;
	price_currency: string | null;
	watch_region: Region | null;
	include_expected: boolean;
	event_id: number;
	kind: 'restock' | 'price_drop';
	at: string | Date;
	price_minor: string | number | null;
	currency: string | null;
	listing_id: number;
	url: string;
	converter_id: number;
	slug: string;
	brand: string;
	model: string;
	shop_name: string;
	shop_region: Region;
	ships_to: string | string[];
	quiet_from: number | null;
	quiet_to: number | null;
	timezone: string | null;
	has_pref: boolean;
	sold_out_at: string | Date | null;
	prev_restock_at: string | Date | null;
	prev_sellout_at: string | Date | null;
}

function pgArray<T extends string>(value: string | string[] | null): T[] {
	if (Array.isArray(value)) return value as T[];
	if (!value) return [];
	return value
		.replace(/^\{|\}$/g, '')
		.split(',')
		.filter(Boolean) as T[];
}

const toDate = (v: string | Date | null) => (v == null ? null : v instanceof Date ? v : new Date(v));

/** Only http(s) links go into an e-mail; anything else falls back to our own page. */
function safeLink(url: string, fallback: string): string {
	try {
		const u = new URL(url);
		return u.protocol === 'https:' || u.protocol === 'http:' ? u.toString() : fallback;
	} catch {
		return fallback;
	}
}

interface RevisionFacts {
	band: Band | null;
	deviationIre: number | null;
	bandReason: string | null;
	code: string | null;
	finding: string | null;
	expected: { band: Band; revisionCode: string; basis: string } | null;
}

/** The converter's best expected grade among revisions not yet measured (current ones first). */
async function expectedFacts(db: Db, converterId: number): Promise<RevisionFacts['expected']> {
	const [rev] = rowsOf<{ expected_band: Band; code: string; expected_basis: string | null }>(
		await db.execute(sql`
			select expected_band, code, expected_basis from revision
			where converter_id = ${converterId} and band is null and expected_band is not null
			order by (seen_to is null and retired_at is null) desc, expected_band asc
			limit 1`)
	);
	return rev ? { band: rev.expected_band, revisionCode: rev.code, basis: rev.expected_basis ?? '' } : null;
}

/** The converter's best current revision with a one-line finding from its latest accepted run. */
export async function revisionFacts(db: Db, converterId: number): Promise<RevisionFacts> {
	const [rev] = rowsOf<{
		id: number;
		band: Band | null;
		code: string;
		deviation_ire: number | null;
		band_reason: string | null;
	}>(
		await db.execute(sql`
			select id, band, code, deviation_ire, band_reason from revision
			where converter_id = ${converterId} and band is not null
			order by (seen_to is null and retired_at is null) desc, band asc, score desc nulls last
			limit 1`)
	);
	const expected = await expectedFacts(db, converterId);
	if (!rev) return { band: null, deviationIre: null, bandReason: null, code: null, finding: null, expected };
	const [run] = rowsOf<{ report: { findings?: { text: string; severity?: string }[] } | string | null }>(
		await db.execute(sql`
			select report from bench_run where revision_id = ${rev.id} and status = 'accepted' and report is not null
			order by measured_on desc, id desc limit 1`)
	);
	const report = typeof run?.report === 'string' ? JSON.parse(run.report) : run?.report;
	const findings: { text: string; severity?: string }[] = report?.findings ?? [];
	// The most serious finding reads best in one line; the engine lists them in reading order.
	const order = { critical: 0, warning: 1, info: 2 } as Record<string, number>;
	const pick = [...findings].sort((a, b) => (order[a.severity ?? 'info'] ?? 3) - (order[b.severity ?? 'info'] ?? 3))[0];
	return {
		band: rev.band,
		deviationIre: rev.deviation_ire,
		bandReason: rev.band_reason,
		code: rev.code,
		finding: pick ? firstSentence(pick.text) : null,
		expected
	};
}

function firstSentence(text: string): string {
	const m = /^(.+?[.!?])(\s|$)/.exec(text.trim());
	return (m ? m[1] : text).trim();
}

/** Load everything the sender and the digest need for some outbox rows. */
export async function loadOutboxContexts(
	db: Db,
	ids: number[],
	opts: { baseUrl: string; rates: RatesPerEur }
): Promise<OutboxContext[]> {
	if (ids.length === 0) return [];
	const rows = rowsOf<Row>(
		await db.execute(sql`
			select o.id as outbox_id, o.attempts, o.message_id, o.mode, o.watch_id, o.user_id, u.email,
				w.paused, w.price_currency, w.region as watch_region, w.include_expected,
				e.id as event_id, e.kind, e.at, e.price_minor, e.currency, e.listing_id,
				l.url, l.converter_id, c.slug, c.brand, c.model, s.name as shop_name, s.region as shop_region, s.ships_to,
				mp.quiet_from, mp.quiet_to, mp.timezone, (mp.user_id is not null) as has_pref,
				(select min(x.at) from stock_event x where x.listing_id = e.listing_id and x.kind = 'sellout' and x.at > e.at) as sold_out_at,
				pr.at as prev_restock_at,
				(select min(x.at) from stock_event x where x.listing_id = e.listing_id and x.kind = 'sellout' and x.at > pr.at and x.at <= e.at) as prev_sellout_at
			from alert_outbox o
			join watch w on w.id = o.watch_id
			join "user" u on u.id = o.user_id
			join stock_event e on e.id = o.stock_event_id
			join listing l on l.id = e.listing_id
			join converter c on c.id = l.converter_id
			join shop s on s.id = l.shop_id
			left join member_pref mp on mp.user_id = o.user_id
			left join lateral (
				select x.at from stock_event x
				where x.listing_id = e.listing_id and x.kind = 'restock' and x.at < e.at
				order by x.at desc limit 1
			) pr on true
			where o.id in (${sql.join(
				ids.map((id) => sql`${id}`),
				sql`, `
			)})
			order by o.id`)
	);
	const facts = new Map<number, RevisionFacts>();
	const out: OutboxContext[] = [];
	for (const r of rows) {
		if (!facts.has(r.converter_id)) facts.set(r.converter_id, await revisionFacts(db, r.converter_id));
		const f = facts.get(r.converter_id)!;
		const priceMinor = r.price_minor == null ? null : Number(r.price_minor);
		const memberCurrency = r.price_currency ?? (r.watch_region ? REGION_CURRENCY[r.watch_region] : null);
		let converted: AlertView['converted'] = null;
		if (memberCurrency && r.currency && priceMinor != null && memberCurrency !== r.currency) {
			const minor = convertMinor(priceMinor, r.currency, memberCurrency, opts.rates);
			if (minor != null) converted = { minor, currency: memberCurrency };
		}
		const prevRestock = toDate(r.prev_restock_at);
		const prevSellout = toDate(r.prev_sellout_at);
		const base = opts.baseUrl.replace(/\/+$/, '');
		const converterUrl = `${base}/converters/${encodeURIComponent(r.slug)}`;
		out.push({
			outboxId: Number(r.outbox_id),
			attempts: r.attempts,
			messageId: r.message_id,
			mode: r.mode,
			watchId: r.watch_id,
			userId: r.user_id,
			email: r.email,
			paused: r.paused,
			eventId: Number(r.event_id),
			listingId: r.listing_id,
			soldOutSince: toDate(r.sold_out_at),
			quiet: r.has_pref ? { quietFrom: r.quiet_from, quietTo: r.quiet_to, timezone: r.timezone ?? 'UTC' } : null,
			view: {
				kind: r.kind,
				at: toDate(r.at)!,
				converter: { slug: r.slug, brand: r.brand, model: r.model },
				shop: { name: r.shop_name, region: r.shop_region, shipsTo: pgArray<Region>(r.ships_to) },
				priceMinor,
				currency: r.currency,
				converted,
				band: f.band,
				deviationIre: f.deviationIre,
				bandReason: f.bandReason,
				revisionCode: f.code,
				finding: f.finding,
				// shown (and called expected) only to a watch that chose expected grades
				expected: r.include_expected ? f.expected : null,
				previousRunMs: prevRestock && prevSellout ? prevSellout.getTime() - prevRestock.getTime() : null,
				buyUrl: safeLink(r.url, converterUrl),
				converterUrl
			}
		});
	}
	return out;
}
