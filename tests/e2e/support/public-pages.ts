/** The public pages a signed-out visitor reaches, for the markup check and the screenshots. */
import { CONVERTERS, DEMO_GUIDE } from '../../../src/lib/demo/scenario';

const swapper = CONVERTERS.find((c) => c.revisions.length > 1)!.slug;

export const PUBLIC_PAGES: string[] = [
	'/',
	'/converters',
	'/converters?band=close&audio=1',
	...CONVERTERS.map((c) => `/converters/${c.slug}`),
	`/compare?c=${CONVERTERS[0].slug},${swapper},${CONVERTERS[CONVERTERS.length - 1].slug}`,
	'/finder',
	'/finder?region=eu&band=fair&budget=40',
	'/guides',
	`/guides/${DEMO_GUIDE.slug}`,
	'/restocks',
	'/learn',
	'/about/data',
	'/signin',
	'/signin/check-inbox'
];

/** One page of each kind (three converter pages: plain, chip-swapping, not yet graded). */
export const SCREEN_PAGES: { name: string; path: string }[] = [
	{ name: 'home', path: '/' },
	{ name: 'catalogue', path: '/converters' },
	{ name: 'converter-plain', path: `/converters/${CONVERTERS[0].slug}` },
	{ name: 'converter-swapper', path: '/converters/halvecraft-rgb-porter' },
	{ name: 'converter-ungraded', path: '/converters/wendmoor-glowbox-2' },
	{ name: 'converter-crushed', path: '/converters/brisling-scanlet' },
	{ name: 'compare', path: PUBLIC_PAGES.find((p) => p.startsWith('/compare'))! },
	{ name: 'finder', path: '/finder?region=eu&band=fair&budget=40' },
	{ name: 'guides', path: '/guides' },
	{ name: 'guide', path: `/guides/${DEMO_GUIDE.slug}` },
	{ name: 'restocks', path: '/restocks' },
	{ name: 'learn', path: '/learn' },
	{ name: 'about-data', path: '/about/data' },
	{ name: 'signin', path: '/signin' }
];
