/**
 * The catalogue's cards as HTML. A card is the same for every visitor of its region, and changes
 * only when the card is rebuilt, so the app renders it once (CatalogueCard through svelte/server)
 * and keeps the HTML with the card (read-model.ts, `loadCatalogueHtmlPage`): a catalogue page then
 * joins stored fragments instead of rendering and reading every card's entry per request.
 *
 * Stored HTML is tagged with the build that rendered it, so a new build (which may render cards
 * differently) renders each card afresh on first show; in dev nothing is stored, as components
 * change under the running server.
 */
import { render } from 'svelte/server';
import { dev, version } from '$app/environment';
import CatalogueCard from '$lib/components/CatalogueCard.svelte';
import type { CatalogueEntry } from '$lib/finder';
import type { CardRenderer } from './queries/read-model';

/**
 * Svelte's hydration markers (`<!--[-->`, `<!--]-->`, `<!---->`...). The catalogue is never
 * hydrated (`csr = false`), so a stored card goes without them: a tenth of its bytes. Svelte
 * escapes `<` in text and attribute values alike, so every comment in its output is a marker.
 */
const HYDRATION_MARKERS = /<!--[^]*?-->/g;

/** One card's HTML: CatalogueCard's server output (text escaped by Svelte), without hydration markers. */
export function renderCatalogueCard(entry: CatalogueEntry): string {
	return render(CatalogueCard, { props: { c: entry } }).body.replace(HYDRATION_MARKERS, '');
}

export const catalogueCards: CardRenderer = { build: dev ? null : version, render: renderCatalogueCard };
