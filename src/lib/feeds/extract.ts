/**
 * Read one offer (price, currency, stock, title) from a shop's page or API document.
 *
 * For HTML the readers run in a fixed order: JSON-LD, then microdata, then the curator's CSS
 * selectors. Shops change templates, and a page that drops its JSON-LD but still carries microdata
 * should keep being read; the listing's configured format only decides which failure we report
 * (and adds a note when another reader had to step in).
 */
import * as cheerio from 'cheerio';
import type { AnyNode, Element } from 'domhandler';
import { mapAvailability } from './availability';
import { formatMinor, parsePrice } from './currency';
import type {
	ApiMapping,
	ExtractFailure,
	ExtractFailureKind,
	ExtractInput,
	ExtractResult,
	OfferFormat,
	OfferSelectors,
	StockState
} from './types';

type CheerioRoot = cheerio.CheerioAPI;

/** What a reader found before price parsing: raw values straight from the document. */
interface RawOffer {
	price: string | number;
	currency?: string;
	availability?: string;
	/** A stock state already decided by the reader (API value mapping). */
	stock?: StockState;
	title?: string;
	notes: string[];
}

type ReaderResult = { ok: true; offer: RawOffer } | { ok: false; kind: ExtractFailureKind; reason: string };

/**
 * Extract an offer from a fetched body. Never throws: every failure is an `ok: false` result with a
 * reason in plain words and a kind the poller can count, and with stock 'unknown' so a broken read
 * cannot turn into a stock change.
 */
export function extractOffer(input: ExtractInput): ExtractResult {
	try {
		return input.format === 'api' ? extractFromApi(input) : extractFromHtml(input);
	} catch (err) {
		// A reader bug must not take down a poll run; report it like any unreadable page.
		return fail('parse', `extractor error: ${err instanceof Error ? err.message : String(err)}`);
	}
}

function fail(kind: ExtractFailureKind, reason: string, notes?: string[]): ExtractFailure {
	return notes && notes.length
		? { ok: false, stock: 'unknown', kind, reason, notes }
		: { ok: false, stock: 'unknown', kind, reason };
}

/** Price parsing, currency checks and stock mapping shared by every reader. */
function finish(raw: RawOffer, via: OfferFormat, input: ExtractInput, extraNotes: string[]): ExtractResult {
	const notes = [...extraNotes, ...raw.notes];
	const price = parsePrice(raw.price, { currencyText: raw.currency, expectedCurrency: input.expectedCurrency });
	if (!price.ok)
		return fail(
			price.kind,
			`${price.kind === 'parse' ? 'price unreadable' : price.kind === 'no-currency' ? 'price has no currency' : 'wrong currency'} (${via}): ${price.reason}`,
			notes
		);
	notes.push(...price.notes);
	let stock: StockState;
	if (raw.stock) {
		stock = raw.stock;
	} else {
		const reading = mapAvailability(raw.availability);
		stock = reading.stock;
		if (reading.note) notes.push(reading.note);
	}
	const result: ExtractResult = { ok: true, priceMinor: price.minor, currency: price.currency, stock, via, notes };
	if (raw.title) result.title = raw.title;
	return result;
}

// ---------------------------------------------------------------- HTML

/** A page that opens <html> but never closes it was cut off in transit: its data cannot be trusted. */
function truncationReason(body: string): string | undefined {
	const trimmed = body.trimEnd();
	if (!trimmed) return 'empty body';
	if (/<html[\s>]/i.test(trimmed) && !/<\/html>\s*$/i.test(trimmed)) {
		return `document is truncated: it opens <html> but ends without </html> (${trimmed.length} characters, ends "${trimmed.slice(-40).replace(/\s+/g, ' ')}")`;
	}
	return undefined;
}

function extractFromHtml(input: ExtractInput): ExtractResult {
	const cut = truncationReason(input.body);
	if (cut) return fail('unreadable', cut);
	if (input.contentType && /json/i.test(input.contentType) && !/html/i.test(input.contentType)) {
		return fail('unreadable', `expected an HTML page for format "${input.format}" but got ${input.contentType}`);
	}
	const $ = cheerio.load(input.body);
	const readers: Array<[OfferFormat, () => ReaderResult]> = [
		['jsonld', () => readJsonLd($)],
		['microdata', () => readMicrodata($)],
		['selectors', () => readSelectors($, input.selectors)]
	];
	const failures: Partial<Record<OfferFormat, { kind: ExtractFailureKind; reason: string }>> = {};
	for (const [via, read] of readers) {
		const r = read();
		if (r.ok) {
			const notes =
				via === input.format
					? []
					: [
							`listing expects ${input.format} but the offer was read via ${via}${failures[input.format] ? ` (${failures[input.format]!.reason})` : ''}`
						];
			// A reader that found an offer decides the outcome even when its price proves unusable:
			// falling through to a weaker reader could pick up an unrelated number on the page.
			return finish(r.offer, via, input, notes);
		}
		failures[via] = { kind: r.kind, reason: r.reason };
	}
	// A product page that says "discontinued" often drops the price: that is a reading, not a failure.
	if (Object.values(failures).every((f) => f.kind === 'no-price')) {
		const said = discontinuedWithoutPrice($, input.selectors);
		if (said) return discontinued(said.via, [`no price shown; ${said.where} says the product is discontinued`]);
	}
	const main = failures[input.format] ?? failures.jsonld!;
	const others = (Object.keys(failures) as OfferFormat[])
		.filter((k) => k !== input.format)
		.map((k) => `${k}: ${failures[k]!.reason}`);
	return fail(main.kind, main.reason, others);
}

function discontinued(via: OfferFormat, notes: string[]): ExtractResult {
	return { ok: true, priceMinor: null, currency: null, stock: 'discontinued', via, notes };
}

const saysDiscontinued = (value: unknown) =>
	value !== undefined && value !== null && mapAvailability(String(value)).stock === 'discontinued';

/**
 * Where a priceless page states the product is discontinued: a JSON-LD or microdata offer's
 * availability (schema.org ItemAvailability), or the text of the curator's stock selector.
 */
function discontinuedWithoutPrice(
	$: CheerioRoot,
	sel: OfferSelectors | undefined
): { via: OfferFormat; where: string } | undefined {
	for (const el of $('script[type="application/ld+json"]').toArray()) {
		let doc: unknown;
		try {
			doc = JSON.parse($(el).text());
		} catch {
			continue;
		}
		for (const node of walk(doc)) {
			if (!isType(node, 'Offer') && !isType(node, 'AggregateOffer')) continue;
			if (saysDiscontinued(scalar(node.availability))) return { via: 'jsonld', where: 'the JSON-LD offer' };
		}
	}
	for (const el of $('[itemprop~="availability"]').toArray())
		if (saysDiscontinued(itemValue($, el))) return { via: 'microdata', where: 'the microdata offer' };
	if (sel?.stock) {
		try {
			const stock = firstText($, sel.stock);
			if (stock.count && saysDiscontinued(stock.text)) return { via: 'selectors', where: `"${sel.stock}"` };
		} catch {
			// An invalid selector is already reported by readSelectors.
		}
	}
	return undefined;
}

function isType(node: unknown, type: string): boolean {
	if (!node || typeof node !== 'object') return false;
	const t = (node as Record<string, unknown>)['@type'];
	const list = Array.isArray(t) ? t : [t];
	return list.some((x) => typeof x === 'string' && x.replace(/^(https?:\/\/schema\.org\/|schema:)/i, '') === type);
}

/** Every object in a JSON-LD document, walking arrays, @graph and nested values. */
function* walk(node: unknown, depth = 0): Generator<Record<string, unknown>> {
	if (depth > 12 || node == null) return;
	if (Array.isArray(node)) {
		for (const n of node) yield* walk(n, depth + 1);
		return;
	}
	if (typeof node !== 'object') return;
	const obj = node as Record<string, unknown>;
	yield obj;
	for (const v of Object.values(obj)) if (v && typeof v === 'object') yield* walk(v, depth + 1);
}

/** Schema.org values may be a bare value, an array, or a {"@value": ...} / {"@id": ...} object. */
function scalar(v: unknown): string | number | undefined {
	if (Array.isArray(v)) return scalar(v[0]);
	if (typeof v === 'string' || typeof v === 'number') return v;
	if (v && typeof v === 'object') {
		const o = v as Record<string, unknown>;
		return scalar(o['@value'] ?? o['@id'] ?? o['name']);
	}
	return undefined;
}

function offerFields(offer: Record<string, unknown>): {
	price?: string | number;
	currency?: string;
	availability?: string;
} {
	let price = scalar(offer.price) ?? scalar(offer.lowPrice);
	let currency = scalar(offer.priceCurrency);
	// Some shops put the amount in a (Unit)PriceSpecification instead of on the Offer.
	if (price === undefined && offer.priceSpecification) {
		const specs = Array.isArray(offer.priceSpecification) ? offer.priceSpecification : [offer.priceSpecification];
		for (const s of specs as Record<string, unknown>[]) {
			if (s && scalar(s.price) !== undefined) {
				price = scalar(s.price);
				currency = currency ?? scalar(s.priceCurrency);
				break;
			}
		}
	}
	const availability = scalar(offer.availability);
	return {
		price,
		currency: currency === undefined ? undefined : String(currency),
		availability: availability === undefined ? undefined : String(availability)
	};
}

function readJsonLd($: CheerioRoot): ReaderResult {
	const scripts = $('script[type="application/ld+json"]').toArray();
	if (!scripts.length) return { ok: false, kind: 'no-price', reason: 'no price found: the page has no JSON-LD block' };
	const broken: string[] = [];
	let sawProduct = false;
	for (const el of scripts) {
		const text = $(el).text().trim();
		let doc: unknown;
		try {
			doc = JSON.parse(text);
		} catch (err) {
			broken.push(`JSON-LD block is not valid JSON (${err instanceof Error ? err.message : String(err)})`);
			continue;
		}
		for (const node of walk(doc)) {
			const product = isType(node, 'Product') || isType(node, 'ProductGroup');
			const offerNodes: Record<string, unknown>[] = [];
			if (product) {
				sawProduct = true;
				const offers = node.offers;
				for (const o of Array.isArray(offers) ? offers : offers ? [offers] : []) {
					if (o && typeof o === 'object') {
						offerNodes.push(o as Record<string, unknown>);
						// An AggregateOffer may list its offers; the first priced one is the listing's.
						const inner = (o as Record<string, unknown>).offers;
						for (const i of Array.isArray(inner) ? inner : inner ? [inner] : [])
							if (i && typeof i === 'object') offerNodes.push(i as Record<string, unknown>);
					}
				}
			} else if ((isType(node, 'Offer') || isType(node, 'AggregateOffer')) && !sawProduct) {
				offerNodes.push(node);
			}
			for (const offer of offerNodes) {
				const f = offerFields(offer);
				if (f.price === undefined || f.price === '') continue;
				const name = product ? scalar(node.name) : undefined;
				const notes: string[] = [];
				if (offerNodes.length > 1) notes.push(`JSON-LD has ${offerNodes.length} offers; read the first priced one`);
				return {
					ok: true,
					offer: {
						price: f.price,
						currency: f.currency,
						availability: f.availability,
						title: name === undefined ? undefined : String(name),
						notes
					}
				};
			}
			// A priceless Product (say, a related item) may sit beside the real one: keep looking.
		}
	}
	if (sawProduct)
		return { ok: false, kind: 'no-price', reason: 'no price found: the JSON-LD Product has no Offer with a price' };
	if (broken.length) return { ok: false, kind: 'unreadable', reason: broken[0] };
	return { ok: false, kind: 'no-price', reason: 'no price found: JSON-LD present but it holds no Product or Offer' };
}

/** Microdata property value per the HTML standard (meta content, link/a href, data/meter value, time datetime, else text). */
function itemValue($: CheerioRoot, el: Element): string {
	const $el = $(el);
	const tag = el.tagName.toLowerCase();
	if (tag === 'meta') return $el.attr('content') ?? '';
	if (['a', 'link', 'area'].includes(tag)) return $el.attr('href') ?? '';
	if (['img', 'audio', 'video', 'source', 'embed', 'iframe', 'track'].includes(tag)) return $el.attr('src') ?? '';
	if (tag === 'object') return $el.attr('data') ?? '';
	if (tag === 'data' || tag === 'meter') return $el.attr('value') ?? '';
	if (tag === 'time') return $el.attr('datetime') ?? $el.text();
	// Not in the HTML standard, but shops commonly put the machine value in content="" on a <span>.
	const content = $el.attr('content');
	if (content !== undefined) return content;
	return $el.text().replace(/\s+/g, ' ').trim();
}

/** Properties of one item: elements with itemprop whose nearest enclosing itemscope is the item itself. */
function itemProps($: CheerioRoot, scope: Element): Map<string, Element[]> {
	const props = new Map<string, Element[]>();
	$(scope)
		.find('[itemprop]')
		.each((_, el) => {
			const owner = $(el).parent().closest('[itemscope]')[0] as AnyNode | undefined;
			if (owner !== scope) return;
			for (const name of ($(el).attr('itemprop') ?? '').split(/\s+/).filter(Boolean)) {
				const list = props.get(name) ?? [];
				list.push(el);
				props.set(name, list);
			}
		});
	return props;
}

function isItemType($: CheerioRoot, el: Element, type: string): boolean {
	return ($(el).attr('itemtype') ?? '')
		.split(/\s+/)
		.some((t) => t.replace(/^https?:\/\/(www\.)?schema\.org\//i, '').replace(/\/$/, '') === type);
}

function readMicrodata($: CheerioRoot): ReaderResult {
	const products = $('[itemscope][itemtype]')
		.toArray()
		.filter((el) => isItemType($, el, 'Product'));
	if (!products.length)
		return { ok: false, kind: 'no-price', reason: 'no price found: the page has no microdata Product item' };
	for (const product of products) {
		const props = itemProps($, product);
		const offers = (props.get('offers') ?? []).filter((el) => $(el).is('[itemscope]'));
		for (const offer of offers) {
			const op = itemProps($, offer);
			const priceEl = op.get('price')?.[0] ?? op.get('lowPrice')?.[0];
			if (!priceEl) continue;
			const price = itemValue($, priceEl);
			if (!price.trim()) continue;
			const currencyEl = op.get('priceCurrency')?.[0];
			const availEl = op.get('availability')?.[0];
			const nameEl = props.get('name')?.[0];
			return {
				ok: true,
				offer: {
					price,
					currency: currencyEl ? itemValue($, currencyEl) : undefined,
					availability: availEl ? itemValue($, availEl) : undefined,
					title: nameEl ? itemValue($, nameEl) : undefined,
					notes: offers.length > 1 ? [`microdata has ${offers.length} offers; read the first priced one`] : []
				}
			};
		}
	}
	return { ok: false, kind: 'no-price', reason: 'no price found: the microdata Product has no Offer with a price' };
}

function firstText($: CheerioRoot, selector: string): { text?: string; count: number; value?: string } {
	let found;
	try {
		found = $(selector);
	} catch (err) {
		throw new Error(`selector "${selector}" is not valid CSS (${err instanceof Error ? err.message : String(err)})`);
	}
	if (!found.length) return { count: 0 };
	const first = found.first();
	const text = first.text().replace(/\s+/g, ' ').trim();
	// A data-price="21.95" or content="21.95" attribute is the shop's machine value: prefer it to the text.
	const value = first.attr('content') ?? (first.attr('data-price') || undefined);
	return { text, count: found.length, value };
}

function readSelectors($: CheerioRoot, sel: OfferSelectors | undefined): ReaderResult {
	if (!sel)
		return { ok: false, kind: 'no-price', reason: 'no price found: no CSS selectors configured for this listing' };
	let price, stock, currency, title;
	try {
		price = firstText($, sel.price);
		stock = firstText($, sel.stock);
		currency = sel.currency ? firstText($, sel.currency) : undefined;
		title = sel.title ? firstText($, sel.title) : undefined;
	} catch (err) {
		return { ok: false, kind: 'parse', reason: err instanceof Error ? err.message : String(err) };
	}
	if (!price.count)
		return { ok: false, kind: 'no-price', reason: `no price found: selector "${sel.price}" matched nothing` };
	const priceText = price.value ?? price.text ?? '';
	if (!priceText)
		return { ok: false, kind: 'no-price', reason: `no price found: selector "${sel.price}" matched an empty element` };
	const notes: string[] = [];
	if (price.count > 1) notes.push(`selector "${sel.price}" matched ${price.count} elements; read the first`);
	if (!stock.count) notes.push(`stock selector "${sel.stock}" matched nothing`);
	if (sel.currency && !currency?.count) {
		// The curator told us where the currency lives; without it the price cannot be trusted.
		return {
			ok: false,
			kind: 'no-currency',
			reason: `price has no currency: selector "${sel.currency}" matched nothing`
		};
	}
	return {
		ok: true,
		offer: {
			price: priceText,
			currency: currency?.text,
			availability: stock.count ? stock.text : undefined,
			title: title?.text || undefined,
			notes
		}
	};
}

// ---------------------------------------------------------------- JSON API

/** Read a dot path ("stock.status", "offers.0.price", "items[0].price") from a parsed document. */
export function getPath(doc: unknown, path: string): unknown {
	const parts = path
		.replace(/\[(\d+)\]/g, '.$1')
		.split('.')
		.filter(Boolean);
	let cur: unknown = doc;
	for (const p of parts) {
		if (cur == null || typeof cur !== 'object') return undefined;
		cur = (cur as Record<string, unknown>)[p];
	}
	return cur;
}

/** The stock state the curator's value table gives a raw API value (compared case-insensitively). */
function tabledStock(map: ApiMapping, raw: unknown): StockState | undefined {
	if (!map.stockValues || raw === undefined || raw === null) return undefined;
	const key = String(raw).toLowerCase();
	return Object.entries(map.stockValues).find(([k]) => k.toLowerCase() === key)?.[1];
}

function extractFromApi(input: ExtractInput): ExtractResult {
	const map: ApiMapping | undefined = input.apiMapping;
	if (!map) return fail('parse', 'no API mapping configured for this listing');
	const body = input.body.trim();
	if (!body) return fail('unreadable', 'empty body');
	if (input.contentType && /html/i.test(input.contentType)) {
		return fail('unreadable', `expected JSON for format "api" but got ${input.contentType}`);
	}
	let doc: unknown;
	try {
		doc = JSON.parse(body);
	} catch (err) {
		return fail(
			'unreadable',
			`body is not valid JSON (${err instanceof Error ? err.message : String(err)}); it may be truncated`
		);
	}
	const rawPrice = getPath(doc, map.price);
	if (rawPrice === undefined || rawPrice === null || rawPrice === '') {
		const raw = getPath(doc, map.stock);
		const mapped = tabledStock(map, raw) ?? (typeof raw === 'string' ? mapAvailability(raw).stock : undefined);
		if (mapped === 'discontinued')
			return discontinued('api', [`no price shown; "${map.stock}" says the product is discontinued`]);
		return fail('no-price', `no price found: path "${map.price}" is missing from the document`);
	}
	if (typeof rawPrice !== 'number' && typeof rawPrice !== 'string') {
		return fail(
			'parse',
			`price unreadable (api): path "${map.price}" holds ${Array.isArray(rawPrice) ? 'an array' : 'an object'}, not a number`
		);
	}
	const notes: string[] = [];
	let currency: string | undefined;
	if (map.currency) {
		const c = getPath(doc, map.currency);
		if (typeof c === 'string' && c.trim()) currency = c;
		else if (!map.fixedCurrency)
			return fail('no-currency', `price has no currency: path "${map.currency}" is missing from the document`);
	}
	if (!currency && map.fixedCurrency) {
		currency = map.fixedCurrency;
		if (map.currency)
			notes.push(`path "${map.currency}" missing; used the mapping's fixed currency ${map.fixedCurrency}`);
	}
	if (!currency)
		return fail('no-currency', 'price has no currency: the mapping sets neither a currency path nor a fixed currency');

	let price: string | number = rawPrice;
	if (map.priceScale === 'minor') {
		const n = typeof rawPrice === 'number' ? rawPrice : Number(rawPrice);
		if (!Number.isInteger(n))
			return fail('parse', `price unreadable (api): "${rawPrice}" is not an integer of minor units`);
		// Shift into a major-unit decimal string so the shared parser applies the ISO 4217 exponent.
		price = formatMinor(n, currency);
	}

	const rawStock = getPath(doc, map.stock);
	let stock = tabledStock(map, rawStock);
	let availability: string | undefined;
	if (!stock) {
		if (rawStock === undefined || rawStock === null) {
			stock = 'unknown';
			notes.push(`stock path "${map.stock}" is missing from the document`);
		} else if (typeof rawStock === 'boolean') {
			stock = rawStock ? 'in_stock' : 'out_of_stock';
		} else {
			// Not in the curator's table: fall back to the general wording rules, which say 'unknown' if unsure.
			availability = String(rawStock);
		}
	}
	const title = map.title ? getPath(doc, map.title) : undefined;
	return finish(
		{ price, currency, availability, stock, title: typeof title === 'string' ? title : undefined, notes },
		'api',
		input,
		[]
	);
}
