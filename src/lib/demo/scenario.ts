/**
 * The demo scenario: every brand, chip, converter, shop and person here is INVENTED
 * for the demo and the tests. None of them names a real company, product or shop.
 *
 * Pure data plus small deterministic generators, so the seed (src/lib/server/db/seed.ts),
 * the fake shops (fixtures/shops) and tests all read one source of truth.
 */

export type Region = 'na' | 'eu' | 'uk' | 'jp' | 'au';
export type FeedFormat = 'jsonld' | 'microdata' | 'selectors' | 'api';
export type DemoStock = 'in_stock' | 'out_of_stock' | 'preorder' | 'backorder' | 'discontinued';

export const REGIONS: Record<Region, { label: string; currency: string }> = {
	na: { label: 'North America', currency: 'USD' },
	eu: { label: 'European Union', currency: 'EUR' },
	uk: { label: 'United Kingdom', currency: 'GBP' },
	jp: { label: 'Japan', currency: 'JPY' },
	au: { label: 'Australia', currency: 'AUD' }
};

/** Chip behaviour used to synthesise bench readings: out = gain * expected + offset, per channel. */
export interface DemoChip {
	slug: string;
	name: string;
	maker: string;
	notes: string;
	profile: {
		gain: [number, number, number];
		offsetMv: [number, number, number];
		/** Levels below this IRE collapse towards black (a crushing DAC curve). */
		crushBelowIre?: number;
	};
}

export const CHIPS: DemoChip[] = [
	{
		slug: 'nadir-nd71',
		name: 'ND-71',
		maker: 'Nadir Semi (invented)',
		notes: 'Tracks the 7 mV per IRE ramp closely on all three channels.',
		profile: { gain: [1.0, 1.002, 0.998], offsetMv: [0.6, -0.4, 0.3] }
	},
	{
		slug: 'quoll-ql3',
		name: 'QL-3',
		maker: 'Quoll Micro (invented)',
		notes: 'Slightly low gain; green a touch above red and blue.',
		profile: { gain: [0.988, 0.996, 0.986], offsetMv: [1.0, 1.5, 0.8] }
	},
	{
		slug: 'kittiwake-kx40',
		name: 'KX-40',
		maker: 'Kittiwake Devices (invented)',
		notes: 'About 3 % short of full white on every channel.',
		profile: { gain: [0.972, 0.974, 0.97], offsetMv: [0.5, 0.5, 0.5] }
	},
	{
		slug: 'tarn-tb9',
		name: 'TB-9',
		maker: 'Tarn Logic (invented)',
		notes: 'Blue channel runs high: a cool, blue-tinted picture.',
		profile: { gain: [0.998, 1.0, 1.033], offsetMv: [0, 0, 1.0] }
	},
	{
		slug: 'sorrel-sr22',
		name: 'SR-22',
		maker: 'Sorrel Integrated (invented)',
		notes: 'Crushes the bottom of the ramp: dark scenes lose detail.',
		profile: { gain: [1.0, 1.0, 1.0], offsetMv: [0, 0, 0], crushBelowIre: 25 }
	}
];

export interface DemoRevision {
	code: string;
	chip: string; // chip slug
	boardMarking: string;
	seenFrom: string; // ISO date
	seenTo: string | null;
	/** How many bench runs the demo records for this revision. */
	runs: number;
}

export interface DemoConverter {
	slug: string;
	brand: string;
	model: string;
	summary: string;
	hasAudioOut: boolean;
	power: 'usb-bus' | 'usb-adapter' | 'barrel';
	outputs: string[];
	revisions: DemoRevision[];
}

export const CONVERTERS: DemoConverter[] = [
	{
		slug: 'vantacove-beam-bridge',
		brand: 'Vantacove',
		model: 'Beam Bridge',
		summary: 'Compact HDMI to VGA box with a 3.5 mm audio jack.',
		hasAudioOut: true,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'nadir-nd71', boardMarking: 'VBB-01 r2', seenFrom: '2025-03-01', seenTo: null, runs: 3 }
		]
	},
	{
		slug: 'brisling-scanlet',
		brand: 'Brisling Labs',
		model: 'Scanlet',
		summary: 'Popular budget adapter that quietly changed chip in its second batch.',
		hasAudioOut: true,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'quoll-ql3', boardMarking: 'SCN-A1', seenFrom: '2024-06-01', seenTo: '2025-08-31', runs: 2 },
			{ code: 'B', chip: 'sorrel-sr22', boardMarking: 'SCN-B3', seenFrom: '2025-09-01', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'quillfen-q-cast-mini',
		brand: 'Quillfen',
		model: 'Q-Cast Mini',
		summary: 'The cheapest box in the demo; shadows go black.',
		hasAudioOut: false,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'sorrel-sr22', boardMarking: 'QCM-100', seenFrom: '2025-01-15', seenTo: null, runs: 1 }
		]
	},
	{
		slug: 'tessaloop-loop-rgb',
		brand: 'Tessaloop',
		model: 'Loop RGB',
		summary: 'Metal-cased adapter with audio out; blue runs high.',
		hasAudioOut: true,
		power: 'usb-adapter',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'tarn-tb9', boardMarking: 'LRGB v1.1', seenFrom: '2025-05-01', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'morrowgate-phosphor-one',
		brand: 'Morrowgate',
		model: 'Phosphor One',
		summary: 'Bench favourite with a barrel power input and no audio.',
		hasAudioOut: false,
		power: 'barrel',
		outputs: ['vga', 'component'],
		revisions: [
			{ code: 'A', chip: 'nadir-nd71', boardMarking: 'PH1-R4', seenFrom: '2024-11-01', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'vantacove-beam-bridge-pro',
		brand: 'Vantacove',
		model: 'Beam Bridge Pro',
		summary: 'The larger Beam Bridge with optical and analog audio out.',
		hasAudioOut: true,
		power: 'usb-adapter',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'kittiwake-kx40', boardMarking: 'VBP-02', seenFrom: '2025-02-01', seenTo: null, runs: 2 }
		]
	}
];

export interface DemoShop {
	slug: string;
	name: string;
	region: Region;
	currency: string;
	format: FeedFormat;
	/** Offset from the fake-shops base port: shop i listens on SHOPS_PORT + portOffset. */
	portOffset: number;
	/** Prices shown as "1.234,56 €" on the page. */
	localePrice?: boolean;
	shipsTo: Region[];
}

export const SHOPS: DemoShop[] = [
	{ slug: 'northbay-circuits', name: 'Northbay Circuits', region: 'na', currency: 'USD', format: 'jsonld', portOffset: 1, shipsTo: ['na'] },
	{ slug: 'kanalhaus', name: 'Kanalhaus', region: 'eu', currency: 'EUR', format: 'selectors', portOffset: 2, localePrice: true, shipsTo: ['eu', 'uk'] },
	{ slug: 'thamesbit', name: 'Thamesbit', region: 'uk', currency: 'GBP', format: 'microdata', portOffset: 3, shipsTo: ['uk', 'eu'] },
	{ slug: 'kumo-parts', name: 'Kumo Parts', region: 'jp', currency: 'JPY', format: 'api', portOffset: 4, shipsTo: ['jp', 'au'] },
	{ slug: 'wattle-and-wire', name: 'Wattle & Wire', region: 'au', currency: 'AUD', format: 'selectors', portOffset: 5, shipsTo: ['au'] }
];

/** CSS selectors the curator set for the plain-HTML shops (the fake shops render to match). */
export const SHOP_SELECTORS: Record<string, { price: string; stock: string; currency?: string; title?: string }> = {
	kanalhaus: { price: '.artikel .preis', stock: '.artikel .lager', title: '.artikel h1' },
	'wattle-and-wire': { price: '#buy-box [data-price]', stock: '#buy-box .availability', currency: '#buy-box [data-currency]', title: 'h1.product-title' }
};

/** JSON mapping the curator set for the API shop (dot paths into its product document). */
export const SHOP_API_MAPPINGS: Record<
	string,
	{
		price: string;
		currency?: string;
		fixedCurrency?: string;
		stock: string;
		stockValues?: Record<string, DemoStock>;
		priceScale?: 'major' | 'minor';
		title?: string;
	}
> = {
	'kumo-parts': {
		price: 'price_yen',
		currency: 'currency',
		stock: 'stock.status',
		stockValues: {
			available: 'in_stock',
			none: 'out_of_stock',
			backorder: 'backorder',
			preorder: 'preorder',
			discontinued: 'discontinued'
		},
		priceScale: 'major',
		title: 'name'
	}
};

export interface DemoListing {
	shop: string;
	converter: string;
	/** Path on the fake shop, e.g. /p/beam-bridge */
	path: string;
	/** Price in minor units of the shop's currency at scenario time 0. */
	priceMinor: number;
	stock: DemoStock;
}

export const LISTINGS: DemoListing[] = [
	{ shop: 'northbay-circuits', converter: 'vantacove-beam-bridge', path: '/products/beam-bridge', priceMinor: 2499, stock: 'out_of_stock' },
	{ shop: 'northbay-circuits', converter: 'brisling-scanlet', path: '/products/scanlet', priceMinor: 1299, stock: 'in_stock' },
	{ shop: 'northbay-circuits', converter: 'morrowgate-phosphor-one', path: '/products/phosphor-one', priceMinor: 3950, stock: 'in_stock' },
	{ shop: 'northbay-circuits', converter: 'tessaloop-loop-rgb', path: '/products/loop-rgb', priceMinor: 1899, stock: 'in_stock' },
	{ shop: 'kanalhaus', converter: 'vantacove-beam-bridge', path: '/artikel/vb-beam-bridge', priceMinor: 2290, stock: 'in_stock' },
	{ shop: 'kanalhaus', converter: 'brisling-scanlet', path: '/artikel/brisling-scanlet', priceMinor: 1190, stock: 'in_stock' },
	{ shop: 'kanalhaus', converter: 'quillfen-q-cast-mini', path: '/artikel/q-cast-mini', priceMinor: 790, stock: 'in_stock' },
	{ shop: 'kanalhaus', converter: 'vantacove-beam-bridge-pro', path: '/artikel/vb-beam-bridge-pro', priceMinor: 123456, stock: 'preorder' },
	{ shop: 'thamesbit', converter: 'tessaloop-loop-rgb', path: '/item/loop-rgb', priceMinor: 1595, stock: 'in_stock' },
	{ shop: 'thamesbit', converter: 'morrowgate-phosphor-one', path: '/item/phosphor-one', priceMinor: 3400, stock: 'out_of_stock' },
	{ shop: 'thamesbit', converter: 'vantacove-beam-bridge-pro', path: '/item/beam-bridge-pro', priceMinor: 2750, stock: 'in_stock' },
	{ shop: 'kumo-parts', converter: 'vantacove-beam-bridge', path: '/api/products/KP-1001', priceMinor: 3480, stock: 'in_stock' },
	{ shop: 'kumo-parts', converter: 'quillfen-q-cast-mini', path: '/api/products/KP-1002', priceMinor: 1280, stock: 'in_stock' },
	{ shop: 'kumo-parts', converter: 'morrowgate-phosphor-one', path: '/api/products/KP-1003', priceMinor: 5980, stock: 'backorder' },
	{ shop: 'wattle-and-wire', converter: 'brisling-scanlet', path: '/shop/brisling-scanlet', priceMinor: 2195, stock: 'in_stock' },
	{ shop: 'wattle-and-wire', converter: 'vantacove-beam-bridge-pro', path: '/shop/beam-bridge-pro', priceMinor: 5495, stock: 'out_of_stock' }
];

/** Demo people (invented). The README documents these sign-in addresses. */
export const DEMO_PEOPLE = {
	curator: { email: 'curator@scopegrade.test', name: 'Ada Bench (demo curator)' },
	admin: { email: 'admin@scopegrade.test', name: 'Rui Admin (demo admin)' },
	member: { email: 'member@scopegrade.test', name: 'Mo Member (demo member)' }
};

/** Reference rates: 1 EUR buys this many units (invented, fixed for the demo). */
export const DEMO_RATES_PER_EUR: Record<string, number> = {
	EUR: 1,
	USD: 1.08,
	GBP: 0.85,
	JPY: 162,
	AUD: 1.65
};

export const IRE_STEPS = [0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100] as const;

/** Small deterministic pseudo-random sequence (mulberry32) so demo readings are stable. */
export function seededRandom(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/** Synthesise one bench run's readings (mV per channel per IRE step) from a chip profile. */
export function demoReadings(chip: DemoChip, runIndex: number, fullScaleMv = 700) {
	const rand = seededRandom(chip.slug.length * 997 + runIndex * 131 + 7);
	const jitter = () => (rand() - 0.5) * 1.2; // +/- 0.6 mV measurement scatter
	return IRE_STEPS.map((ire) => {
		const expected = (fullScaleMv / 100) * ire;
		const level = (ch: 0 | 1 | 2) => {
			const { gain, offsetMv, crushBelowIre } = chip.profile;
			let base = expected;
			if (crushBelowIre && ire < crushBelowIre) {
				// Crushed toe: the level falls away faster than the signal below the knee.
				base = expected * (ire / crushBelowIre) ** 1.05;
			}
			const mv = ire === 0 ? Math.max(0, offsetMv[ch] * 0.3 + jitter() * 0.5) : gain[ch] * base + offsetMv[ch] + jitter();
			return Math.round(Math.max(0, mv) * 10) / 10;
		};
		return { ire, r: level(0), g: level(1), b: level(2) };
	});
}
