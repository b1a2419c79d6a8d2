import { dev, version } from '$app/environment';

/**
 * The islands script's address for a page's <script type="module">. The built file keeps one
 * name across releases (vite.config.ts), so the release's version in the query keeps a browser
 * from running an old copy against new chunks; `vite dev` serves the source directly.
 */
export const ISLANDS_SRC = dev ? '/src/lib/islands/boot.ts' : `/_app/islands.js?v=${version}`;
