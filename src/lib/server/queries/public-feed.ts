/**
 * The restocks Atom feed (RFC 4287): a stable feed id, one entry per stock event with a tag
 * URI id (RFC 4151) that never changes, updated timestamps in RFC 3339, alternate links,
 * and every text escaped for XML.
 */
import { formatMoney, REGION_LABELS } from '../../pricing';
import { bandLabel, markText } from '../../components/bands';
import type { RestockRow } from './public';

const TAG = 'tag:scopegrade.test,2026';

/** Escape text for XML element content and attribute values. */
export function xmlEscape(s: string): string {
	return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' })[c]!);
}

export function restocksAtom(rows: RestockRow[], origin: string): string {
	const updated = rows[0]?.at ?? new Date(0).toISOString();
	const entries = rows.map((r) => {
		const price = r.priceMinor != null && r.currency ? formatMoney(r.priceMinor, r.currency) : 'price unknown';
		const title = `${r.converterName} back in stock at ${r.shopName} (${price})`;
		const summary = `${r.converterName} (level grade ${markText({ band: r.band, deviationIre: r.deviationIre, reason: r.bandReason })}) is buyable again at ${r.shopName} in ${REGION_LABELS[r.shopRegion]} for ${price}.`;
		const page = `${origin}/converters/${r.converterSlug}`;
		return [
			'  <entry>',
			`    <id>${TAG}:restock:${r.id}</id>`,
			`    <title type="text">${xmlEscape(title)}</title>`,
			`    <updated>${r.at}</updated>`,
			`    <published>${r.at}</published>`,
			`    <link rel="alternate" type="text/html" href="${xmlEscape(page)}"/>`,
			`    <link rel="related" href="${xmlEscape(r.url)}" title="${xmlEscape(r.shopName)}"/>`,
			`    <category term="${xmlEscape(r.band ?? 'ungraded')}" label="${xmlEscape(bandLabel(r.band))}"/>`,
			`    <summary type="text">${xmlEscape(summary)}</summary>`,
			'  </entry>'
		].join('\n');
	});
	return [
		'<?xml version="1.0" encoding="utf-8"?>',
		'<feed xmlns="http://www.w3.org/2005/Atom">',
		`  <id>${TAG}:restocks</id>`,
		'  <title type="text">Scopegrade restocks</title>',
		'  <subtitle type="text">HDMI-to-analog converters back in stock, with their bench grade.</subtitle>',
		`  <updated>${updated}</updated>`,
		`  <link rel="self" type="application/atom+xml" href="${xmlEscape(origin)}/restocks/feed.atom"/>`,
		`  <link rel="alternate" type="text/html" href="${xmlEscape(origin)}/restocks"/>`,
		'  <author><name>Scopegrade</name></author>',
		'  <rights>Scopegrade bench data, CC BY 4.0</rights>',
		'  <generator>Scopegrade</generator>',
		...entries,
		'</feed>',
		''
	].join('\n');
}
