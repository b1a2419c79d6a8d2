/**
 * One zod schema per form in the curator workspace and the admin pages. Routes validate
 * with `superValidate(request, zod4(schema))`; the domain modules take the parsed values.
 * Messages are written for the person at the form, so they say what to type.
 */
import { z } from 'zod';
import { FEED_FORMATS, GUIDE_STATUSES, POWER_KINDS, REGIONS, ROLES, TERMINATIONS } from '../../enums';
import { ALL_STEPS_IRE } from '../../levels/index';
import { SLUG_RE } from './common';
import { PG_INT_MAX } from '../http/numbers';

const text = (label: string, max = 200) =>
	z.string().trim().min(1, `${label} is required.`).max(max, `${label} is at most ${max} characters.`);
const optText = (max = 4000) => z.string().trim().max(max, `At most ${max} characters.`).default('');
const isoDate = (label: string) => z.iso.date(`${label}: use a date like 2024-05-31.`);
const optDate = (label: string) => isoDate(label).or(z.literal('')).default('');
const slugField = z
	.string()
	.trim()
	.max(80)
	.refine((s) => s === '' || SLUG_RE.test(s), 'Lower-case letters, digits and single hyphens, like "beam-bridge-2".')
	.default('');
// Ids fit PostgreSQL's integer (larger ones would fail in the database, not here).
const id = (label: string) =>
	z
		.number({ message: `Choose ${label}.` })
		.int()
		.positive(`Choose ${label}.`)
		.max(PG_INT_MAX, `Choose ${label}.`);
const optId = z.number().int().positive().max(PG_INT_MAX).optional();
const rowId = () => z.number().int().positive().max(PG_INT_MAX);

// ------------------------------------------------------------------ catalogue

export const chipSchema = z.object({
	name: text('Chip name', 80),
	maker: text('Maker', 120),
	slug: slugField,
	notes: optText()
});

export { FEED_FORMATS, POWER_KINDS, TERMINATIONS };
export const OUTPUT_KINDS = ['vga', 'component', 'scart', 'bnc'] as const;

export const converterSchema = z.object({
	brand: text('Brand', 80),
	model: text('Model', 120),
	slug: slugField,
	summary: optText(600),
	hasAudioOut: z.boolean().default(false),
	power: z.enum(POWER_KINDS).default('usb-bus'),
	outputs: z.array(z.enum(OUTPUT_KINDS)).min(1, 'Tick at least one analog output.').default(['vga'])
});

/** Retiring a converter: an optional reason for the audit log. */
export const retireSchema = z.object({
	reason: z.string().trim().max(500, 'A reason is at most 500 characters.').default('')
});

export const revisionSchema = z
	.object({
		converterId: id('a converter'),
		code: text('Revision code', 40),
		chipId: id('the chip'),
		boardMarking: optText(120),
		seenFrom: optDate('Seen from'),
		seenTo: optDate('Seen until'),
		notes: optText()
	})
	.refine((r) => !r.seenFrom || !r.seenTo || r.seenTo >= r.seenFrom, {
		message: 'The last date seen cannot be before the first.',
		path: ['seenTo']
	});

// ------------------------------------------------------------------ bench runs

/** Flat reading fields r0, g0, b0 ... b100, so the grid posts as a plain form without JS. */
export function readingKey(channel: 'r' | 'g' | 'b', ire: number) {
	return `${channel}${ire}` as const;
}
const readingShape = Object.fromEntries(
	ALL_STEPS_IRE.flatMap((ire) =>
		(['r', 'g', 'b'] as const).map((c) => [
			readingKey(c, ire),
			z
				.number({ message: 'A number in mV.' })
				.min(-100, 'Not more than 100 mV below blanking: readings are mV above blanking (0 mV).')
				.max(2000, 'Not above 2000 mV.')
				.optional()
		])
	)
) as Record<`${'r' | 'g' | 'b'}${number}`, z.ZodOptional<z.ZodNumber>>;

export const benchRunSchema = z.object({
	revisionId: id('the revision'),
	measuredBy: text('Who measured', 120),
	measuredOn: isoDate('Measured on'),
	testSource: text('Test source', 200),
	pattern: text('Pattern', 200).default('11-step grey ramp, 0-100 IRE'),
	instrument: text('Instrument', 200),
	termination: z.enum(TERMINATIONS).default('75-ohm'),
	fullScaleMv: z
		.number({ message: 'Full scale in mV, usually 700.' })
		.min(100, 'At least 100 mV.')
		.max(2000, 'At most 2000 mV.')
		.default(700),
	notes: optText(),
	traceFileId: z.uuid().or(z.literal('')).default(''),
	...readingShape
});
export type ReadingKey = `${'r' | 'g' | 'b'}${number}`;
export type BenchRunForm = z.infer<typeof benchRunSchema> & Partial<Record<ReadingKey, number>>;

export const reviewSchema = z.object({
	id: rowId(),
	decision: z.enum(['accept', 'reject']),
	reason: z
		.string()
		.trim()
		.min(3, 'Give a short reason (it is kept in the audit log and shown to the submitter).')
		.max(500)
});

export const supersedeSchema = z.object({
	id: rowId(),
	supersededById: optId,
	reason: z.string().trim().min(3, 'Say why this run no longer counts.').max(500)
});

// ------------------------------------------------------------------ teardowns

export const teardownSchema = z
	.object({
		converterId: id('the converter you opened'),
		revisionId: optId,
		shopId: optId,
		shopNameOther: optText(120),
		purchaseMonth: z.string().regex(/^\d{4}-(0[1-9]|1[0-2])$/, 'Purchase month: use a month like 2024-05.'),
		chipId: optId,
		chipText: optText(120),
		boardMarking: optText(120),
		notes: optText(),
		photoFileId: z.uuid().or(z.literal('')).default('')
	})
	.refine((t) => t.chipId !== undefined || t.chipText.length > 0, {
		message: 'Pick the chip you found, or type what is printed on it.',
		path: ['chipText']
	})
	.refine((t) => t.shopId !== undefined || t.shopNameOther.length > 0, {
		message: 'Pick the shop, or type its name.',
		path: ['shopNameOther']
	});

export const teardownReviewSchema = z.object({
	id: rowId(),
	decision: z.enum(['verify', 'reject']),
	reason: z.string().trim().min(3, 'Give a short reason (kept in the audit log).').max(500),
	revisionId: optId,
	chipId: optId
});

// ------------------------------------------------------------------ listings and shops

/** Feed config as JSON text in a textarea; '' means "use the shop's". */
const jsonText = z
	.string()
	.trim()
	.max(8000)
	.refine((s) => {
		if (s === '') return true;
		try {
			const v = JSON.parse(s);
			return typeof v === 'object' && v !== null && !Array.isArray(v);
		} catch {
			return false;
		}
	}, 'Feed config must be a JSON object, like {"selectors": {"price": ".price", "stock": ".stock"}}.')
	.default('');

export const listingSchema = z.object({
	shopId: id('the shop'),
	converterId: id('the converter'),
	url: z.url({ message: 'A full page address, starting with http:// or https://.', protocol: /^https?$/ }),
	format: z.enum(FEED_FORMATS),
	pollIntervalMinutes: z
		.number()
		.int()
		.min(1, 'At least 1 minute.')
		.max(10080, 'At most a week (10080 minutes).')
		.default(60),
	feedConfig: jsonText
});

/** A listing's own settings on its page: polled or not, and how often. */
export const listingSettingsSchema = z.object({
	// An unticked checkbox posts nothing: missing means "not polled".
	active: z.boolean().default(false),
	pollIntervalMinutes: z
		.number({ message: 'Minutes, a whole number.' })
		.int('Minutes, a whole number.')
		.min(1, 'At least 1 minute.')
		.max(10080, 'At most a week (10080 minutes).')
});

export const shopSchema = z.object({
	name: text('Shop name', 120),
	slug: slugField,
	region: z.enum(REGIONS),
	currency: z
		.string()
		.trim()
		.toUpperCase()
		.regex(/^[A-Z]{3}$/, 'A three-letter ISO 4217 code, like EUR.'),
	baseUrl: z.url({ message: 'The shop address, like https://shop.example/.', protocol: /^https?$/ }),
	defaultFormat: z.enum(FEED_FORMATS),
	maxConcurrency: z.number().int().min(1, 'At least 1.').max(16, 'At most 16.').default(2),
	minSpacingMs: z.number().int().min(0, 'Not negative.').max(600000, 'At most 10 minutes.').default(1000),
	feedConfig: jsonText,
	shipsTo: z.array(z.enum(REGIONS)).default([]),
	// An unticked checkbox posts nothing, so a missing value means "not active" (the new-shop
	// form starts ticked through its initial values instead).
	active: z.boolean().default(false)
});

export const rateSchema = z
	.object({
		base: z
			.string()
			.trim()
			.toUpperCase()
			.regex(/^[A-Z]{3}$/, 'A three-letter code, like EUR.'),
		quote: z
			.string()
			.trim()
			.toUpperCase()
			.regex(/^[A-Z]{3}$/, 'A three-letter code, like JPY.'),
		day: isoDate('Day'),
		rate: z.number({ message: 'A positive number.' }).positive('A positive number.').max(1e9)
	})
	.refine((r) => r.base !== r.quote, { message: 'Base and quote must differ.', path: ['quote'] });

export const roleChangeSchema = z.object({
	userId: z.string().min(1),
	role: z.enum(ROLES),
	reason: z.string().trim().min(3, 'Give a reason for the audit log.').max(500)
});

// ------------------------------------------------------------------ guides

export const guideSchema = z.object({
	title: text('Title', 160),
	slug: slugField,
	summary: optText(400),
	bodyMarkdown: z.string().max(100_000, 'The guide is too long (100 000 characters at most).').default('')
});

/** The publish / unpublish / retire buttons: the pressed button's value. */
export const guideStatusSchema = z.object({
	status: z.enum(GUIDE_STATUSES, { message: 'Choose publish, unpublish or retire.' })
});

export const guidePickSchema = z.object({
	converterId: id('a converter'),
	note: optText(300),
	position: z.number().int().min(0).max(99).default(0)
});

// ------------------------------------------------------------------ tester checks

/** A curator's decision on a run flagged by the tester check (an action signal). */
export const flagDecisionSchema = z.object({
	id: z.number().int().positive(),
	decision: z.enum(['keep', 'supersede', 'remeasure']),
	note: z.string().trim().min(3, 'Give a short note (the tester sees it, and it is kept in the audit log).').max(500)
});
