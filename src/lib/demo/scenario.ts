/**
 * The demo scenario: every brand, chip, converter, shop and person here is INVENTED
 * for the demo and the tests. None of them names a real company, product or shop.
 *
 * Pure data plus small deterministic generators, so the seed (src/lib/server/db/seed.ts),
 * the fake shops (fixtures/shops) and tests all read one source of truth.
 */

import type { Region, StockState } from '../enums';

export type { Region };
export type FeedFormat = 'jsonld' | 'microdata' | 'selectors' | 'api';
/** A shop page always says something about stock; `unknown` is only what we conclude from an unreadable one. */
export type DemoStock = Exclude<StockState, 'unknown'>;

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
		slug: 'nadir-nqj417',
		name: 'NQJ-417',
		maker: 'Nadir Semi (invented)',
		notes: 'Tracks the 7 mV per IRE ramp closely on all three channels.',
		profile: { gain: [1.0, 1.002, 0.998], offsetMv: [0.6, -0.4, 0.3] }
	},
	{
		slug: 'quoll-qmz208',
		name: 'QMZ-208',
		maker: 'Quoll Micro (invented)',
		notes: 'Slightly low gain; green a touch above red and blue.',
		profile: { gain: [0.988, 0.996, 0.986], offsetMv: [1.0, 1.5, 0.8] }
	},
	{
		slug: 'kittiwake-kjw635',
		name: 'KJW-635',
		maker: 'Kittiwake Devices (invented)',
		notes: 'About 3 % short of full white on every channel.',
		profile: { gain: [0.972, 0.974, 0.97], offsetMv: [0.5, 0.5, 0.5] }
	},
	{
		slug: 'tarn-tqb912',
		name: 'TQB-912',
		maker: 'Tarn Logic (invented)',
		notes: 'Blue channel runs high: a cool, blue-tinted picture.',
		profile: { gain: [0.998, 1.0, 1.033], offsetMv: [0, 0, 1.0] }
	},
	{
		slug: 'sorrel-szw350',
		name: 'SZW-350',
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
			{ code: 'A', chip: 'nadir-nqj417', boardMarking: 'VBB 014', seenFrom: '2025-03-01', seenTo: null, runs: 3 }
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
			{
				code: 'A',
				chip: 'quoll-qmz208',
				boardMarking: 'SCN 101',
				seenFrom: '2024-06-01',
				seenTo: '2025-08-31',
				runs: 2
			},
			{ code: 'B', chip: 'sorrel-szw350', boardMarking: 'SCN 203', seenFrom: '2025-09-01', seenTo: null, runs: 2 }
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
			{ code: 'A', chip: 'sorrel-szw350', boardMarking: 'QCM 100', seenFrom: '2025-01-15', seenTo: null, runs: 1 }
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
			{ code: 'A', chip: 'tarn-tqb912', boardMarking: 'LRG 110', seenFrom: '2025-05-01', seenTo: null, runs: 2 }
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
			{ code: 'A', chip: 'nadir-nqj417', boardMarking: 'PHO 104', seenFrom: '2024-11-01', seenTo: null, runs: 2 }
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
			{ code: 'A', chip: 'kittiwake-kjw635', boardMarking: 'VBP 202', seenFrom: '2025-02-01', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'orrinford-tubelink-duo',
		brand: 'Orrinford',
		model: 'Tubelink Duo',
		summary: 'Two-output box that moved to a better chip in its 2025 batches.',
		hasAudioOut: true,
		power: 'usb-bus',
		outputs: ['vga', 'component'],
		revisions: [
			{
				code: 'A',
				chip: 'kittiwake-kjw635',
				boardMarking: 'TLD 301',
				seenFrom: '2024-03-01',
				seenTo: '2025-04-30',
				runs: 2
			},
			{ code: 'B', chip: 'nadir-nqj417', boardMarking: 'TLD 305', seenFrom: '2025-05-01', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'halvecraft-rgb-porter',
		brand: 'Halvecraft',
		model: 'RGB Porter',
		summary: 'Ships with either of two chips, batch by batch; the box does not say which.',
		hasAudioOut: true,
		power: 'usb-adapter',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'tarn-tqb912', boardMarking: 'RGP 410', seenFrom: '2024-09-01', seenTo: null, runs: 2 },
			{ code: 'B', chip: 'quoll-qmz208', boardMarking: 'RGP 420', seenFrom: '2025-03-01', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'pellamy-linecaster-s',
		brand: 'Pellamy',
		model: 'Linecaster S',
		summary: 'A well-liked small box that most shops no longer stock.',
		hasAudioOut: false,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'quoll-qmz208', boardMarking: 'LCS 500', seenFrom: '2023-10-01', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'wendmoor-glowbox-2',
		brand: 'Wendmoor',
		model: 'Glowbox 2',
		summary: 'New on the shelves; no bench run yet, but its chip is known from other boxes.',
		hasAudioOut: true,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'nadir-nqj417', boardMarking: 'GBX 620', seenFrom: '2026-01-10', seenTo: null, runs: 0 }
		]
	},
	{
		slug: 'dunmere-signal-jr',
		brand: 'Dunmere',
		model: 'Signal Jr',
		summary: 'Pocket adapter powered from the HDMI port; dark scenes suffer.',
		hasAudioOut: false,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'sorrel-szw350', boardMarking: 'DSJ 710', seenFrom: '2025-06-01', seenTo: null, runs: 1 }
		]
	},
	{
		slug: 'trellisound-component-kit',
		brand: 'Trellisound',
		model: 'Component Kit',
		summary: 'Component (YPbPr) and VGA out with a line-level audio jack.',
		hasAudioOut: true,
		power: 'barrel',
		outputs: ['component', 'vga'],
		revisions: [
			{ code: 'A', chip: 'kittiwake-kjw635', boardMarking: 'TCK 810', seenFrom: '2025-01-20', seenTo: null, runs: 2 }
		]
	},
	{
		slug: 'ruddle-slimline',
		brand: 'Ruddle',
		model: 'Slimline',
		summary: 'Flat adapter with a short cable; a member has sent in a bench run.',
		hasAudioOut: false,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{ code: 'A', chip: 'quoll-qmz208', boardMarking: 'RSL 905', seenFrom: '2025-07-01', seenTo: null, runs: 1 }
		]
	},
	{
		slug: 'caddoway-pocket-vga',
		brand: 'Caddoway',
		model: 'Pocket VGA',
		summary: 'Changed chip in late 2025, for the worse: newer units crush shadows.',
		hasAudioOut: true,
		power: 'usb-bus',
		outputs: ['vga'],
		revisions: [
			{
				code: 'A',
				chip: 'tarn-tqb912',
				boardMarking: 'CPV 130',
				seenFrom: '2024-08-01',
				seenTo: '2025-10-31',
				runs: 2
			},
			{ code: 'B', chip: 'sorrel-szw350', boardMarking: 'CPV 140', seenFrom: '2025-11-01', seenTo: null, runs: 1 }
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
	{
		slug: 'northbay-circuits',
		name: 'Northbay Circuits',
		region: 'na',
		currency: 'USD',
		format: 'jsonld',
		portOffset: 1,
		shipsTo: ['na']
	},
	{
		slug: 'kanalhaus',
		name: 'Kanalhaus',
		region: 'eu',
		currency: 'EUR',
		format: 'selectors',
		portOffset: 2,
		localePrice: true,
		shipsTo: ['eu', 'uk']
	},
	{
		slug: 'thamesbit',
		name: 'Thamesbit',
		region: 'uk',
		currency: 'GBP',
		format: 'microdata',
		portOffset: 3,
		shipsTo: ['uk', 'eu']
	},
	{
		slug: 'kumo-parts',
		name: 'Kumo Parts',
		region: 'jp',
		currency: 'JPY',
		format: 'api',
		portOffset: 4,
		shipsTo: ['jp', 'au']
	},
	{
		slug: 'wattle-and-wire',
		name: 'Wattle & Wire',
		region: 'au',
		currency: 'AUD',
		format: 'selectors',
		portOffset: 5,
		shipsTo: ['au']
	}
];

/** CSS selectors the curator set for the plain-HTML shops (the fake shops render to match). */
export const SHOP_SELECTORS: Record<string, { price: string; stock: string; currency?: string; title?: string }> = {
	kanalhaus: { price: '.artikel .preis', stock: '.artikel .lager', title: '.artikel h1' },
	'wattle-and-wire': {
		price: '#buy-box [data-price]',
		stock: '#buy-box .availability',
		currency: '#buy-box [data-currency]',
		title: 'h1.product-title'
	}
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
	/**
	 * Finished out-of-stock spells in the generated history (each followed by an in-stock
	 * one), so the restock pages and a restock outlook have something to read.
	 */
	spells?: number;
}

export const LISTINGS: DemoListing[] = [
	{
		shop: 'northbay-circuits',
		converter: 'vantacove-beam-bridge',
		path: '/products/beam-bridge',
		priceMinor: 2499,
		stock: 'out_of_stock',
		spells: 4
	},
	{
		shop: 'northbay-circuits',
		converter: 'brisling-scanlet',
		path: '/products/scanlet',
		priceMinor: 1299,
		stock: 'in_stock'
	},
	{
		shop: 'northbay-circuits',
		converter: 'morrowgate-phosphor-one',
		path: '/products/phosphor-one',
		priceMinor: 3950,
		stock: 'in_stock'
	},
	{
		shop: 'northbay-circuits',
		converter: 'tessaloop-loop-rgb',
		path: '/products/loop-rgb',
		priceMinor: 1899,
		stock: 'in_stock'
	},
	{
		shop: 'kanalhaus',
		converter: 'vantacove-beam-bridge',
		path: '/artikel/vb-beam-bridge',
		priceMinor: 2290,
		stock: 'in_stock'
	},
	{
		shop: 'kanalhaus',
		converter: 'brisling-scanlet',
		path: '/artikel/brisling-scanlet',
		priceMinor: 1190,
		stock: 'in_stock',
		spells: 3
	},
	{
		shop: 'kanalhaus',
		converter: 'quillfen-q-cast-mini',
		path: '/artikel/q-cast-mini',
		priceMinor: 790,
		stock: 'in_stock'
	},
	{
		shop: 'kanalhaus',
		converter: 'vantacove-beam-bridge-pro',
		path: '/artikel/vb-beam-bridge-pro',
		priceMinor: 123456,
		stock: 'preorder'
	},
	{ shop: 'thamesbit', converter: 'tessaloop-loop-rgb', path: '/item/loop-rgb', priceMinor: 1595, stock: 'in_stock' },
	{
		shop: 'thamesbit',
		converter: 'morrowgate-phosphor-one',
		path: '/item/phosphor-one',
		priceMinor: 3400,
		stock: 'out_of_stock',
		spells: 3
	},
	{
		shop: 'thamesbit',
		converter: 'vantacove-beam-bridge-pro',
		path: '/item/beam-bridge-pro',
		priceMinor: 2750,
		stock: 'in_stock'
	},
	{
		shop: 'kumo-parts',
		converter: 'vantacove-beam-bridge',
		path: '/api/products/KP-1001',
		priceMinor: 3480,
		stock: 'in_stock'
	},
	{
		shop: 'kumo-parts',
		converter: 'quillfen-q-cast-mini',
		path: '/api/products/KP-1002',
		priceMinor: 1280,
		stock: 'in_stock'
	},
	{
		shop: 'kumo-parts',
		converter: 'morrowgate-phosphor-one',
		path: '/api/products/KP-1003',
		priceMinor: 5980,
		stock: 'backorder'
	},
	{
		shop: 'wattle-and-wire',
		converter: 'brisling-scanlet',
		path: '/shop/brisling-scanlet',
		priceMinor: 2195,
		stock: 'in_stock'
	},
	{
		shop: 'wattle-and-wire',
		converter: 'vantacove-beam-bridge-pro',
		path: '/shop/beam-bridge-pro',
		priceMinor: 5495,
		stock: 'out_of_stock'
	},
	{
		shop: 'northbay-circuits',
		converter: 'orrinford-tubelink-duo',
		path: '/products/tubelink-duo',
		priceMinor: 2999,
		stock: 'in_stock',
		spells: 4
	},
	{
		shop: 'northbay-circuits',
		converter: 'halvecraft-rgb-porter',
		path: '/products/rgb-porter',
		priceMinor: 2299,
		stock: 'in_stock',
		spells: 3
	},
	{
		shop: 'northbay-circuits',
		converter: 'pellamy-linecaster-s',
		path: '/products/linecaster-s',
		priceMinor: 1999,
		stock: 'discontinued'
	},
	{
		shop: 'northbay-circuits',
		converter: 'wendmoor-glowbox-2',
		path: '/products/glowbox-2',
		priceMinor: 1799,
		stock: 'in_stock'
	},
	{
		shop: 'northbay-circuits',
		converter: 'caddoway-pocket-vga',
		path: '/products/pocket-vga',
		priceMinor: 1099,
		stock: 'in_stock',
		spells: 3
	},
	{
		shop: 'kanalhaus',
		converter: 'orrinford-tubelink-duo',
		path: '/artikel/orrinford-tubelink-duo',
		priceMinor: 2790,
		stock: 'out_of_stock',
		spells: 3
	},
	{
		shop: 'kanalhaus',
		converter: 'halvecraft-rgb-porter',
		path: '/artikel/halvecraft-rgb-porter',
		priceMinor: 2150,
		stock: 'in_stock',
		spells: 3
	},
	{
		shop: 'kanalhaus',
		converter: 'trellisound-component-kit',
		path: '/artikel/trellisound-component-kit',
		priceMinor: 4490,
		stock: 'in_stock'
	},
	{
		shop: 'kanalhaus',
		converter: 'ruddle-slimline',
		path: '/artikel/ruddle-slimline',
		priceMinor: 1350,
		stock: 'in_stock'
	},
	{
		shop: 'thamesbit',
		converter: 'halvecraft-rgb-porter',
		path: '/item/rgb-porter',
		priceMinor: 1899,
		stock: 'in_stock',
		spells: 4
	},
	{ shop: 'thamesbit', converter: 'dunmere-signal-jr', path: '/item/signal-jr', priceMinor: 899, stock: 'in_stock' },
	{
		shop: 'thamesbit',
		converter: 'pellamy-linecaster-s',
		path: '/item/linecaster-s',
		priceMinor: 1650,
		stock: 'out_of_stock'
	},
	{
		shop: 'kumo-parts',
		converter: 'orrinford-tubelink-duo',
		path: '/api/products/KP-1004',
		priceMinor: 4280,
		stock: 'in_stock',
		spells: 3
	},
	{
		shop: 'kumo-parts',
		converter: 'caddoway-pocket-vga',
		path: '/api/products/KP-1005',
		priceMinor: 1980,
		stock: 'in_stock'
	},
	{
		shop: 'kumo-parts',
		converter: 'trellisound-component-kit',
		path: '/api/products/KP-1006',
		priceMinor: 6980,
		stock: 'backorder'
	},
	{
		shop: 'wattle-and-wire',
		converter: 'halvecraft-rgb-porter',
		path: '/shop/halvecraft-rgb-porter',
		priceMinor: 3695,
		stock: 'out_of_stock',
		spells: 3
	},
	{
		shop: 'wattle-and-wire',
		converter: 'dunmere-signal-jr',
		path: '/shop/dunmere-signal-jr',
		priceMinor: 1895,
		stock: 'in_stock'
	}
];

/** Demo people (invented). The README documents these sign-in addresses. */
export const DEMO_PEOPLE = {
	curator: { email: 'curator@scopegrade.test', name: 'Ada Bench (demo curator)' },
	admin: { email: 'admin@scopegrade.test', name: 'Rui Admin (demo admin)' },
	member: { email: 'member@scopegrade.test', name: 'Mo Member (demo member)' }
};

/**
 * Three invented bench testers (members) who measured several of the same revisions. Their
 * scopes differ: Juno's reads about 5 % high (every level x 1.05), Ravi's and Lin's agree
 * within a fraction of a percent, so statistics across testers have a bias to find.
 */
export interface DemoTester {
	email: string;
	name: string;
	instrument: string;
	/** Multiplies every reading: the tester's scope calibration. */
	scopeGain: number;
}

export const TESTERS: DemoTester[] = [
	{
		email: 'juno.probe@testers.scopegrade.test',
		name: 'Juno Probe (demo bench tester)',
		instrument: 'Two-channel bench scope, 70 MHz, 10x probes (demo)',
		scopeGain: 1.05
	},
	{
		email: 'ravi.trace@testers.scopegrade.test',
		name: 'Ravi Trace (demo bench tester)',
		instrument: 'Four-channel bench scope, 200 MHz, 75 ohm feed-through (demo)',
		scopeGain: 1.0
	},
	{
		email: 'lin.graticule@testers.scopegrade.test',
		name: 'Lin Graticule (demo bench tester)',
		instrument: 'USB scope, 100 MHz, 75 ohm feed-through (demo)',
		scopeGain: 0.996
	}
];

/** Revisions every demo tester measured ("converter-slug:code"); their runs are accepted. */
export const TESTER_REVISIONS = [
	'vantacove-beam-bridge:A',
	'morrowgate-phosphor-one:A',
	'tessaloop-loop-rgb:A',
	'orrinford-tubelink-duo:B',
	'halvecraft-rgb-porter:B',
	'trellisound-component-kit:A'
];

/** A member's bench run waiting in the curators' review queue. */
export const PENDING_MEMBER_RUN = { revision: 'ruddle-slimline:A', runIndex: 5 };

/** A verified teardown: a unit bought at a shop in a month, opened, the chip read. */
export interface DemoTeardown {
	converter: string;
	shop: string;
	/** YYYY-MM */
	month: string;
	revision: string;
	notes?: string;
}

const td = (converter: string, shop: string, rows: [string, string][]): DemoTeardown[] =>
	rows.map(([month, revision]) => ({ converter, shop, month, revision }));

/** Verified teardown reports (each with a generated board photo): the input of the revision odds. */
export const TEARDOWNS: DemoTeardown[] = [
	...td('brisling-scanlet', 'northbay-circuits', [
		['2025-05', 'A'],
		['2025-10', 'B'],
		['2025-12', 'B'],
		['2026-01', 'B']
	]),
	...td('brisling-scanlet', 'kanalhaus', [
		['2025-07', 'A'],
		['2025-09', 'A'],
		['2025-11', 'B']
	]),
	...td('brisling-scanlet', 'wattle-and-wire', [
		['2025-10', 'A'],
		['2025-12', 'B'],
		['2026-01', 'B']
	]),
	...td('orrinford-tubelink-duo', 'northbay-circuits', [
		['2025-02', 'A'],
		['2025-07', 'B'],
		['2025-10', 'B']
	]),
	...td('orrinford-tubelink-duo', 'kumo-parts', [
		['2025-06', 'A'],
		['2025-08', 'A'],
		['2025-11', 'B']
	]),
	...td('halvecraft-rgb-porter', 'kanalhaus', [
		['2025-04', 'A'],
		['2025-06', 'B'],
		['2025-09', 'B'],
		['2025-12', 'B']
	]),
	...td('halvecraft-rgb-porter', 'thamesbit', [
		['2025-05', 'A'],
		['2025-08', 'A'],
		['2025-11', 'B']
	]),
	...td('halvecraft-rgb-porter', 'wattle-and-wire', [
		['2025-03', 'A'],
		['2025-07', 'A'],
		['2025-10', 'A']
	]),
	...td('caddoway-pocket-vga', 'northbay-circuits', [
		['2025-09', 'A'],
		['2025-12', 'B'],
		['2026-01', 'B']
	])
];

/** A member's teardown report still waiting for a curator. */
export const PENDING_TEARDOWN: DemoTeardown = {
	converter: 'halvecraft-rgb-porter',
	shop: 'northbay-circuits',
	month: '2026-01',
	revision: 'B',
	notes: 'Bought in January; the chip marking is under a heat pad, photo taken after lifting it.'
};

/** The published demo guide; a pick's `bandAtPick` is what the curator saw when picking. */
export const DEMO_GUIDE = {
	slug: 'a-first-converter-for-a-crt',
	title: 'A first converter for a CRT',
	summary: 'Four boxes we would hand a friend with a CRT and an HDMI source, and what to watch for.',
	bodyMarkdown: [
		'## What matters',
		'',
		'Levels first: a box that crushes the bottom of the grey ramp hides dark detail on every game. Then whether you can buy the revision that was measured, because several boxes changed chip between batches.',
		'',
		'## Before you open one',
		'',
		"Unplug it, mind static, and read the shop's return terms first: opening a box may void its warranty. Never open the CRT itself; it holds lethal voltages even when unplugged."
	].join('\n'),
	picks: [
		{
			converter: 'orrinford-tubelink-duo',
			bandAtPick: 'exact',
			note: 'Current batches carry the good chip; component out too.'
		},
		{ converter: 'vantacove-beam-bridge', bandAtPick: 'exact', note: 'Small, exact levels and an audio jack.' },
		{
			converter: 'pellamy-linecaster-s',
			bandAtPick: 'close',
			note: 'Close levels in a tiny case, if you can find one.'
		},
		{ converter: 'brisling-scanlet', bandAtPick: 'close', note: 'Cheap and close, in the batches we measured first.' }
	] as { converter: string; bandAtPick: 'exact' | 'close' | 'fair' | 'poor' | 'failing'; note: string }[]
};

/** The demo member watches this converter; the seed queues an alert for its latest restock. */
export const DEMO_WATCH = { converter: 'orrinford-tubelink-duo' };

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
			const mv =
				ire === 0 ? Math.max(0, offsetMv[ch] * 0.3 + jitter() * 0.5) : gain[ch] * base + offsetMv[ch] + jitter();
			return Math.round(Math.max(0, mv) * 10) / 10;
		};
		return { ire, r: level(0), g: level(1), b: level(2) };
	});
}
