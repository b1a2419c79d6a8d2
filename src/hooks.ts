import type { Transport } from '@sveltejs/kit';
import { RenderOnly } from '$lib/render-only';

/** Hooks shared by server and browser: how load data crosses between them. */
export const transport: Transport = {
	RenderOnly: {
		// a placeholder stands for the value, which stays on the server
		encode: (value) => value instanceof RenderOnly && 1,
		decode: () => {
			throw new Error('Render-only page data reached the browser: renderOnly() is for the HTML of csr = false pages.');
		}
	}
};
