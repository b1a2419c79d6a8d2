/**
 * Parts of public pages the app renders once and keeps with the data they show, so a request joins
 * stored fragments instead of rendering them again:
 * - the catalogue's cards (CatalogueCard), one per card and region: read-model.ts,
 *   `loadCatalogueHtmlPage`, stored in `converter_card.card_html`;
 * - a converter page's revision panels (RevisionPanel), the same for every visitor: stored with the
 *   converter's document as one text (`converter_detail.revisions_html`, converter-doc.ts
 *   `storeRevisionsHtml`).
 * Both pages are served without hydration (`csr = false`; their islands mount, not hydrate), so
 * Svelte's hydration markers are left out. Stored HTML is tagged with the build that rendered it:
 * a new build (which may render differently) renders afresh on first show; in dev nothing is
 * stored, as components change under the running server.
 */
import { render } from 'svelte/server';
import { dev, version } from '$app/environment';
import CatalogueCard from '$lib/components/CatalogueCard.svelte';
import RevisionPanel from '$lib/components/RevisionPanel.svelte';
import type { CatalogueEntry } from '$lib/finder';
import type { Db } from './db/client';
import { storeRevisionsHtml } from './queries/converter-doc';
import type { PageRevision, StoredPanels } from './queries/public';
import type { CardRenderer } from './queries/read-model';

/** The build stored HTML is tagged with; null (dev) stores nothing. */
export const HTML_BUILD: string | null = dev ? null : version;

/**
 * Svelte's hydration markers (`<!--[-->`, `<!--]-->`, `<!---->`...): a tenth of a card's bytes.
 * Svelte escapes `<` in text and attribute values alike, so every comment in its output is a marker.
 */
const HYDRATION_MARKERS = /<!--[^]*?-->/g;

const withoutMarkers = (body: string) => body.replace(HYDRATION_MARKERS, '');

/** One card's HTML: CatalogueCard's server output (text escaped by Svelte), without hydration markers. */
export function renderCatalogueCard(entry: CatalogueEntry): string {
	return withoutMarkers(render(CatalogueCard, { props: { c: entry } }).body);
}

export const catalogueCards: CardRenderer = { build: HTML_BUILD, render: renderCatalogueCard };

/** A converter page's revision panels, in order: RevisionPanel's server output without hydration markers. */
export function renderRevisionPanels(revisions: PageRevision[], converterName: string): string[] {
	return revisions.map((revision) =>
		withoutMarkers(render(RevisionPanel, { props: { revision, converterName } }).body)
	);
}

/**
 * A converter page's revision panels as one HTML text: those stored with its document, when this
 * build rendered them for this converter name; else rendered now and stored with the document they
 * came from. Kept as one text rather than a list, so a read gets a string without JSON to parse.
 */
export async function revisionPanels(
	db: Db,
	panels: StoredPanels,
	revisions: PageRevision[],
	converterName: string
): Promise<string> {
	if (panels.stored?.name === converterName) return panels.stored.html;
	const html = joinedHtml(renderRevisionPanels(revisions, converterName));
	if (HTML_BUILD && panels.docVersion)
		await storeRevisionsHtml(db, panels.converterId, panels.docVersion, HTML_BUILD, { name: converterName, html });
	return html;
}

/**
 * Fragments as one string for a page's `{@html}`, without copying them: `+` links the pieces (V8
 * keeps a rope) where join would copy them all once more before the page copies them into its own
 * text (a catalogue page: 80-odd kB less to allocate per request, a quarter less promoted to V8's
 * old generation in a loop of 2,500 catalogue renders).
 */
export function joinedHtml(fragments: readonly string[]): string {
	let all = '';
	for (const fragment of fragments) all += fragment;
	return all;
}
