import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// The test run builds into its own folder so it never swaps files under a running `npm start`.
		// precompress: .br and .gz beside every static asset; scripts/serve.mjs compresses the rest.
		adapter: adapter({ out: process.env.SG_BUILD_DIR || 'build', precompress: true }),
		// The cross-site form check lives in src/hooks.server.ts (src/lib/server/csrf.ts), which
		// can exempt the RFC 8058 one-click unsubscribe endpoint; SvelteKit's own cannot.
		csrf: { trustedOrigins: ['*'] },
		// Content-Security-Policy on every page. SvelteKit adds a nonce (or, for prerendered
		// pages, a hash) for its own scripts and for app.html's theme script
		// (nonce="%sveltekit.nonce%"). Inline style attributes stay allowed: Svelte and Chart.js
		// set them; scripts never are. Guide markdown may show https images.
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:', 'https:'],
				'font-src': ['self', 'data:'],
				'connect-src': ['self'],
				'object-src': ['none'],
				'base-uri': ['self'],
				'form-action': ['self'],
				'frame-ancestors': ['none']
			}
		}
	}
};

export default config;
