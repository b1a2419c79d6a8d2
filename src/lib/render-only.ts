/**
 * Page data a server-rendered page shows and the browser never receives. SvelteKit serializes every
 * server load's data for hydration (devalue), even on pages with `csr = false` that then leave it
 * out of the HTML: on the converter page and the catalogue that cost about 1 ms of CPU and 0.7 MB
 * of garbage per request. Wrapped in RenderOnly, the data reaches the components as it is, and the
 * serializer writes one number in its place (the `transport` hook in src/hooks.ts).
 *
 * Only for pages with `csr = false`, and only in their HTML: when the visitor comes from a page that
 * hydrated, SvelteKit's router fetches the page's data (`__data.json`) and renders it in the browser,
 * so a data request gets the value itself.
 */
export class RenderOnly<T> {
	constructor(readonly value: T) {}
}

/** A server load's return value for a `csr = false` page: its components read `data.rendered.value`. */
export const renderOnly = <T>(value: T, event: { isDataRequest: boolean }): { rendered: { readonly value: T } } => ({
	rendered: event.isDataRequest ? { value } : new RenderOnly(value)
});
