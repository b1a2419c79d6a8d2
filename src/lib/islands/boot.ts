/**
 * The one script a converter page loads (besides static/enhance.js): it finds the page's islands
 * (`[data-island]`, rendered by Island.svelte) and mounts each one's Svelte component when its
 * trigger fires. Svelte's runtime and the components are fetched only then, so a visitor who
 * only reads the page runs no framework code at all. Built as `_app/islands.js` by the
 * `islands` plugin in vite.config.ts; `vite dev` serves this file as it is.
 */
import { ISLANDS, type IslandName, type IslandTrigger } from './registry';

// A pointer moving over the page counts too: a desktop visitor looks at a chart in the first screen
// without scrolling, and would see an empty frame until the first wheel turn.
const ENGAGING = ['scroll', 'wheel', 'keydown', 'pointerdown', 'pointermove', 'touchstart', 'focusin'] as const;
let engaged = false;
const waiting = new Set<() => void>();

/** Run fn at the visitor's first scroll, key, pointer or touch on the page (at once after it). */
function whenEngaged(fn: () => void) {
	if (engaged) return fn();
	if (waiting.size === 0)
		for (const type of ENGAGING) window.addEventListener(type, engage, { passive: true, capture: true });
	waiting.add(fn);
}

function engage() {
	engaged = true;
	for (const type of ENGAGING) window.removeEventListener(type, engage, { capture: true });
	const all = [...waiting];
	waiting.clear();
	for (const fn of all) fn();
}

/** Mount the island's component in place of its placeholder (once). */
async function start(el: HTMLElement) {
	if (el.dataset.island === undefined || el.dataset.mounted) return;
	const load = ISLANDS[el.dataset.island as IslandName];
	if (!load) return;
	el.dataset.mounted = 'loading';
	const props = JSON.parse(el.dataset.props || '{}');
	const [{ mount }, { default: component }] = await Promise.all([import('svelte'), load()]);
	el.replaceChildren();
	mount(component as never, { target: el, props });
	el.dataset.mounted = 'true';
}

function whenNear(el: HTMLElement) {
	whenEngaged(() => {
		if (!('IntersectionObserver' in window)) return void start(el);
		const io = new IntersectionObserver(
			(entries) => {
				if (entries.some((e) => e.isIntersecting)) {
					io.disconnect();
					void start(el);
				}
			},
			{ rootMargin: '200px 0px' }
		);
		io.observe(el);
	});
}

function whenOpened(el: HTMLElement) {
	const details = el.closest('details');
	if (!details || details.open) return void start(el);
	const onToggle = () => {
		if (!details.open) return;
		details.removeEventListener('toggle', onToggle);
		void start(el);
	};
	details.addEventListener('toggle', onToggle);
}

for (const el of document.querySelectorAll<HTMLElement>('[data-island]')) {
	const trigger = (el.dataset.when ?? 'visible') as IslandTrigger;
	if (trigger === 'load') void start(el);
	else if (trigger === 'open') whenOpened(el);
	else whenNear(el);
}
