import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// The test run builds into its own folder so it never swaps files under a running `npm start`.
		adapter: adapter({ out: process.env.SG_BUILD_DIR || 'build' }),
		// The cross-site form check lives in src/hooks.server.ts (src/lib/server/csrf.ts), which
		// can exempt the RFC 8058 one-click unsubscribe endpoint; SvelteKit's own cannot.
		csrf: { trustedOrigins: ['*'] }
	}
};

export default config;
