import tailwindcss from '@tailwindcss/vite';
import { sveltekit } from '@sveltejs/kit/vite';
import type { Plugin } from 'vite';
import { defineConfig } from 'vitest/config';

/**
 * Pages served without the app's JavaScript (`csr = false`) bring their live sections to life
 * through src/lib/islands/boot.ts. It is built as one more entry of SvelteKit's client build, so
 * it shares the Svelte runtime chunk with the rest of the app, under a fixed name the server can
 * link to (src/lib/islands/src.ts); the chunks it loads keep their hashed, immutable names.
 */
function islands(): Plugin {
	let client = false;
	return {
		name: 'scopegrade-islands',
		apply: 'build',
		configResolved(config) {
			client = !config.build.ssr;
		},
		buildStart() {
			if (client) this.emitFile({ type: 'chunk', id: 'src/lib/islands/boot.ts', fileName: '_app/islands.js' });
		}
	};
}

export default defineConfig({
	plugins: [tailwindcss(), sveltekit(), islands()],
	test: {
		include: ['src/**/*.test.ts', 'tests/unit/**/*.test.ts', 'tests/integration/**/*.test.ts'],
		environment: 'node',
		// Integration tests share one test database: run files one after another.
		fileParallelism: false,
		testTimeout: 30_000,
		hookTimeout: 60_000
	}
});
