import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// The test run builds into its own folder so it never swaps files under a running `npm start`.
		adapter: adapter({ out: process.env.SG_BUILD_DIR || 'build' })
	}
};

export default config;
