import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';

// app.html's one inline script (the theme, before first paint), allowed by its hash: hashes
// rather than nonces because anonymous pages are cached and served to many visitors, and a
// nonce must never be reused (CSP Level 3, section 7.2).
const themeScript = readFileSync(new URL('./src/app.html', import.meta.url), 'utf8').match(
	/<script>([\s\S]*?)<\/script>/
)?.[1];
if (themeScript === undefined) throw new Error('src/app.html: the theme <script> is missing');
const themeScriptHash = `sha256-${createHash('sha256').update(themeScript).digest('base64')}`;

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
		// Content-Security-Policy on every page. SvelteKit hashes its own inline scripts; the
		// theme script's hash is computed above. Inline style attributes stay allowed: Svelte and
		// Chart.js set them; scripts never are. Guide markdown may show https images.
		csp: {
			mode: 'hash',
			directives: {
				'default-src': ['self'],
				'script-src': ['self', themeScriptHash],
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
