/**
 * Alert and digest e-mails: our own words and look (the same calm card as the sign-in
 * message), an HTML part built with the escaping `html` template and a plain-text part.
 * Pure: the sender gathers the facts (AlertView) from the database.
 */
import {
	RULER_END_IRE,
	RULER_TICKS_IRE,
	bandLabel,
	bandZoneIre,
	markHidesMarker,
	markText,
	type Band
} from '../../components/bands';
import { formatMoney, REGION_LABELS, type Region } from '../../pricing';
import { html, SafeHtml } from './template';

export interface AlertView {
	kind: 'restock' | 'price_drop';
	at: Date;
	converter: { slug: string; brand: string; model: string };
	shop: { name: string; region: Region; shipsTo: Region[] };
	priceMinor: number | null;
	currency: string | null;
	/** The price in the member's currency, when it differs from the shop's and a rate is known. */
	converted: { minor: number; currency: string } | null;
	band: Band | null;
	/** The worst deviation (IRE) behind the band and the band's reason word (see bands.ts). */
	deviationIre?: number | null;
	bandReason?: string | null;
	/** Revision code the band belongs to (e.g. "B"). */
	revisionCode: string | null;
	/** One plain-words finding from the revision's latest accepted bench run. */
	finding: string | null;
	/**
	 * An expected grade (a prediction for a revision not yet measured), only for a watch that
	 * chose to include expected grades. The e-mail always calls it expected.
	 */
	expected?: { band: Band; revisionCode: string; basis: string } | null;
	/** How long the listing's previous restock lasted before it sold out, in ms (null: no history). */
	previousRunMs: number | null;
	buyUrl: string;
	converterUrl: string;
	/** Digests only: the listing sold out again after this event. */
	soldOutAt?: Date | null;
}

export interface MessageLinks {
	manageUrl: string;
	unsubscribeUrl: string;
}

export interface RenderedMessage {
	subject: string;
	text: string;
	html: string;
}

const ACCENT = '#b45309';
const INK = '#1d1d1b';
const MUTED = '#5c5a55';
const LINE = '#dcd9d2';

/** "3 days 4 hours", "5 hours 10 minutes", "25 minutes". */
export function formatDuration(ms: number): string {
	const minutes = Math.max(1, Math.round(ms / 60_000));
	const plural = (n: number, w: string) => `${n} ${w}${n === 1 ? '' : 's'}`;
	if (minutes < 60) return plural(minutes, 'minute');
	const hours = Math.floor(minutes / 60);
	if (hours < 24)
		return minutes % 60 ? `${plural(hours, 'hour')} ${plural(minutes % 60, 'minute')}` : plural(hours, 'hour');
	const days = Math.floor(hours / 24);
	return hours % 24 ? `${plural(days, 'day')} ${plural(hours % 24, 'hour')}` : plural(days, 'day');
}

export function converterName(v: Pick<AlertView, 'converter'>) {
	return `${v.converter.brand} ${v.converter.model}`;
}

function priceText(v: AlertView): string {
	if (v.priceMinor == null || !v.currency) return 'price not shown by the shop';
	const own = formatMoney(v.priceMinor, v.currency);
	return v.converted ? `${own} (about ${formatMoney(v.converted.minor, v.converted.currency)})` : own;
}

function whereText(v: AlertView): string {
	const others = v.shop.shipsTo.filter((r) => r !== v.shop.region).map((r) => REGION_LABELS[r]);
	return `${v.shop.name}, ${REGION_LABELS[v.shop.region]}${others.length ? `; ships to ${others.join(', ')}` : ''}`;
}

function bandText(v: AlertView): string {
	if (!v.band) return 'Not graded yet';
	const mark = markText({ band: v.band, deviationIre: v.deviationIre, reason: v.bandReason });
	return `${mark}${v.revisionCode ? `, revision ${v.revisionCode}` : ''}`;
}

function lastRunText(v: AlertView): string {
	return v.previousRunMs == null
		? 'No earlier restock on record at this shop.'
		: `Last time it stayed in stock for ${formatDuration(v.previousRunMs)}.`;
}

function headline(v: AlertView): string {
	return v.kind === 'restock' ? `${converterName(v)} is back in stock` : `${converterName(v)} dropped in price`;
}

/** The subject line: what, where, how much. */
export function alertSubject(v: AlertView): string {
	const price = v.priceMinor != null && v.currency ? `, ${formatMoney(v.priceMinor, v.currency)}` : '';
	return v.kind === 'restock'
		? `Back in stock: ${converterName(v)} at ${v.shop.name}${price}`
		: `Price drop: ${converterName(v)} at ${v.shop.name}${price}`;
}

/** Ruler cells in the e-mail: each covers this many IRE (0 to RULER_END_IRE). */
const CELL_IRE = 0.5;
const ZONE_TINT = '#f6e3cf';

/**
 * The band mark drawn with table cells (no images): a ruler from 0 to beyond 6 IRE, ticks at
 * the band limits, a ▼ over the cell holding the worst deviation and the band's zone tinted.
 * The ▼ and the words beside it carry the meaning, so it reads without colour.
 */
function rulerHtml(v: AlertView): SafeHtml {
	const mark = { band: v.band, deviationIre: v.deviationIre, reason: v.bandReason };
	const n = Math.round(RULER_END_IRE / CELL_IRE);
	const lastTick = RULER_TICKS_IRE[RULER_TICKS_IRE.length - 1];
	const markerCell = markHidesMarker(mark) ? -1 : Math.min(n - 1, Math.floor((v.deviationIre as number) / CELL_IRE));
	const zone = v.band && markerCell >= 0 ? bandZoneIre(v.band) : null;
	const top = Array.from(
		{ length: n },
		(_, i) =>
			html`<td style="width:6px;height:10px;padding:0;font-size:10px;line-height:10px;text-align:center;color:${INK}">
				${i === markerCell ? '▼' : ''}
			</td>`
	);
	const bottom = Array.from({ length: n }, (_, i) => {
		const from = i * CELL_IRE;
		const tick = from === 0 || RULER_TICKS_IRE.includes(from);
		const inZone = zone !== null && from >= zone[0] && from < zone[1];
		return html`<td
			style="width:6px;height:7px;padding:0;border-bottom:1px ${from >= lastTick ? 'dashed' : 'solid'} ${MUTED};border-left:1px solid ${tick ? MUTED : 'transparent'};background:${inZone ? ZONE_TINT : 'transparent'}"
		></td>`;
	});
	return html`<table
		role="presentation"
		cellpadding="0"
		cellspacing="0"
		style="display:inline-table;vertical-align:middle;margin-right:8px;border-collapse:collapse"
	>
		<tr>
			${top}
		</tr>
		<tr>
			${bottom}
		</tr>
	</table>`;
}

/** 'Expected: Close, revision B (not yet measured; from 6 runs of this chip in 3 other converters)'. */
export function expectedText(e: NonNullable<AlertView['expected']>): string {
	const basis = e.basis.replace(/; not yet measured$/, '');
	return `Expected: ${bandLabel(e.band)}, revision ${e.revisionCode} (not yet measured; ${basis})`;
}

function readoutRow(label: string, value: SafeHtml | string): SafeHtml {
	return html`<tr>
		<td style="padding:6px 12px 6px 0;font-size:13px;color:${MUTED};white-space:nowrap;vertical-align:top">${label}</td>
		<td style="padding:6px 0;font-size:14px;line-height:1.45">${value}</td>
	</tr>`;
}

function alertCardHtml(v: AlertView): SafeHtml {
	return html`<h2 style="margin:0 0 10px;font-size:18px">${headline(v)}</h2>
		<table
			role="presentation"
			cellpadding="0"
			cellspacing="0"
			style="border-top:1px solid ${LINE};border-bottom:1px solid ${LINE};margin:0 0 16px;width:100%"
		>
			${readoutRow('Where', whereText(v))}
			${readoutRow('Price', html`<span style="font-variant-numeric:tabular-nums">${priceText(v)}</span>`)}
			${readoutRow('Level grade', html`${rulerHtml(v)}<strong>${bandText(v)}</strong>`)}
			${v.expected ? readoutRow('Expected grade', html`<em>${expectedText(v.expected)}</em>`) : ''}
			${v.finding ? readoutRow('On the bench', v.finding) : ''} ${readoutRow('Stock history', lastRunText(v))}
			${v.soldOutAt ? readoutRow('Now', html`<strong>Sold out again</strong> ${formatDuration(v.soldOutAt.getTime() - v.at.getTime())} later`) : ''}
		</table>
		<p style="margin:0 0 8px">
			<a
				href="${v.buyUrl}"
				style="display:inline-block;background:${ACCENT};color:#ffffff;text-decoration:none;padding:10px 18px;border-radius:6px;font-weight:600"
				>Open the shop page</a
			>
			&nbsp; <a href="${v.converterUrl}" style="color:${ACCENT};font-weight:600">Grade and prices on Scopegrade</a>
		</p>`;
}

function shell(title: SafeHtml | string, body: SafeHtml, links: MessageLinks, why: string): string {
	return html`<!doctype html>
		<html>
			<body style="margin:0;background:#f4f3f0;font-family:system-ui,sans-serif;color:${INK}">
				<table role="presentation" width="100%" cellpadding="0" cellspacing="0">
					<tr>
						<td align="center" style="padding:32px 12px">
							<table
								role="presentation"
								width="100%"
								style="max-width:560px;background:#ffffff;border:1px solid ${LINE};border-radius:10px"
								cellpadding="0"
								cellspacing="0"
							>
								<tr>
									<td style="padding:24px 28px">
										<p
											style="margin:0 0 4px;font-size:13px;letter-spacing:.08em;text-transform:uppercase;color:${ACCENT}"
										>
											Scopegrade stock alert
										</p>
										<h1 style="margin:0 0 18px;font-size:20px">${title}</h1>
										${body}
										<p style="margin:20px 0 0;font-size:12px;color:${MUTED};line-height:1.5">
											${why} Stock moves fast: check the shop's page before you pay.
											<a href="${links.manageUrl}" style="color:${MUTED}">Manage your watches</a> ·
											<a href="${links.unsubscribeUrl}" style="color:${MUTED}">Unsubscribe</a>
										</p>
									</td>
								</tr>
							</table>
						</td>
					</tr>
				</table>
			</body>
		</html>`.value;
}

function alertText(v: AlertView): string[] {
	return [
		headline(v),
		'',
		`Where:         ${whereText(v)}`,
		`Price:         ${priceText(v)}`,
		`Level grade:   ${bandText(v)}`,
		...(v.expected ? [`Expected grade: ${expectedText(v.expected)}`] : []),
		...(v.finding ? [`On the bench:  ${v.finding}`] : []),
		`Stock history: ${lastRunText(v)}`,
		...(v.soldOutAt
			? [`Now:           Sold out again ${formatDuration(v.soldOutAt.getTime() - v.at.getTime())} later`]
			: []),
		'',
		`Shop page:  ${v.buyUrl}`,
		`Scopegrade: ${v.converterUrl}`
	];
}

/** One alert e-mail (a restock or a price drop for one watch). */
export function renderAlertMessage(v: AlertView, links: MessageLinks): RenderedMessage {
	const why = 'You get this because you watch this converter on Scopegrade.';
	const text = [
		...alertText(v),
		'',
		'--',
		why + " Stock moves fast: check the shop's page before you pay.",
		`Manage your watches: ${links.manageUrl}`,
		`Unsubscribe from this watch: ${links.unsubscribeUrl}`
	].join('\n');
	return { subject: alertSubject(v), text, html: shell(headline(v), alertCardHtml(v), links, why) };
}

/** The daily digest: every alert a member collected, newest first, in one message. */
export function renderDigestMessage(items: AlertView[], links: MessageLinks, day: string): RenderedMessage {
	if (items.length === 0) throw new Error('an empty digest is never sent');
	const sorted = [...items].sort((a, b) => b.at.getTime() - a.at.getTime());
	const restocks = sorted.filter((v) => v.kind === 'restock').length;
	const drops = sorted.length - restocks;
	const counts = [
		restocks ? `${restocks} restock${restocks === 1 ? '' : 's'}` : '',
		drops ? `${drops} price drop${drops === 1 ? '' : 's'}` : ''
	]
		.filter(Boolean)
		.join(' and ');
	const subject = `Your Scopegrade digest for ${day}: ${counts}`;
	const why = 'You get this daily digest because you watch converters on Scopegrade.';
	const cards = sorted.map(
		(v, i) =>
			html`${i ? html`<hr style="border:0;border-top:1px solid ${LINE};margin:22px 0" />` : ''}${alertCardHtml(v)}`
	);
	const text = [
		`Scopegrade digest for ${day}: ${counts}.`,
		'',
		...sorted.flatMap((v) => [...alertText(v), '']),
		'--',
		why,
		`Manage your watches: ${links.manageUrl}`,
		`Unsubscribe from all alerts: ${links.unsubscribeUrl}`
	].join('\n');
	return { subject, text, html: shell(`${counts} since your last digest`, html`${cards}`, links, why) };
}

/**
 * RFC 2369 section 3.2 List-Unsubscribe (angle brackets, comma-separated, preferred first) and
 * RFC 8058 section 3.1 List-Unsubscribe-Post for one-click unsubscribe by HTTPS POST.
 */
export function unsubscribeHeaders(
	baseUrl: string,
	token: string,
	mailDomain = 'scopegrade.test'
): Record<string, string> {
	return {
		'List-Unsubscribe': `<${unsubscribeUrl(baseUrl, token)}>, <mailto:unsubscribe+${token}@${mailDomain}>`,
		'List-Unsubscribe-Post': 'List-Unsubscribe=One-Click'
	};
}

export function unsubscribeUrl(baseUrl: string, token: string): string {
	return `${baseUrl.replace(/\/+$/, '')}/unsubscribe/${encodeURIComponent(token)}`;
}
