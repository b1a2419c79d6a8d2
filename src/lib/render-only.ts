/**
 * Page data a server-rendered page shows and the browser never receives. SvelteKit serializes every
 * server load's data for hydration (devalue), even on pages with `csr = false` that then leave it
 * out of the HTML: on the converter page and the catalogue that cost about 1 ms of CPU and 0.7 MB
 * of garbage per request. Wrapped in RenderOnly, the data reaches the components as it is, and the
 * serializer writes one number in its place (the `transport` hook in src/hooks.ts).
 *
 * Only for pages with `csr = false`: a hydrating page would find nothing to decode.
 */
export class RenderOnly<T> {
	constructor(readonly value: T) {}
}

/** A server load's return value for a `csr = false` page: its components read `data.rendered.value`. */
export const renderOnly = <T>(value: T) => ({ rendered: new RenderOnly(value) });
