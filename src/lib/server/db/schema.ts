/**
 * The whole Scopegrade domain in one Drizzle schema.
 *
 * Naming: our own tables are singular snake_case with snake_case columns. The four Auth.js
 * tables (`user`, `account`, `session`, `verificationToken`) keep the names and camelCase
 * columns the Drizzle adapter expects; we only add `role` (and timestamps) to `user`.
 *
 * This module is loaded by drizzle-kit, tsx job scripts and Vite alike: keep it free of
 * `$lib` and `$env` imports.
 */
import { sql } from 'drizzle-orm';
import {
	bigint,
	bigserial,
	boolean,
	customType,
	char,
	check,
	date,
	doublePrecision,
	index,
	integer,
	json,
	jsonb,
	numeric,
	pgEnum,
	pgTable,
	primaryKey,
	serial,
	smallint,
	text,
	timestamp,
	uniqueIndex,
	uuid,
	type AnyPgColumn
} from 'drizzle-orm/pg-core';
import {
	ALERT_MODES,
	BANDS,
	FEED_FORMATS,
	GUIDE_STATUSES,
	POWER_KINDS,
	REGIONS,
	ROLES,
	STOCK_STATES,
	TERMINATIONS
} from '../../enums';

// ---------------------------------------------------------------- enums

// Roles, bands, stock states and regions are declared once in src/lib/enums.ts.
export const roleEnum = pgEnum('role', ROLES);
export const bandEnum = pgEnum('band', BANDS);
export const stockStateEnum = pgEnum('stock_state', STOCK_STATES);
export const regionEnum = pgEnum('region', REGIONS);
export const feedFormatEnum = pgEnum('feed_format', FEED_FORMATS);
export const powerKindEnum = pgEnum('power_kind', POWER_KINDS);
export const runStatusEnum = pgEnum('run_status', ['pending', 'accepted', 'rejected', 'superseded']);
export const reviewStatusEnum = pgEnum('review_status', ['pending', 'verified', 'rejected']);
export const terminationEnum = pgEnum('termination', TERMINATIONS);
export const fileKindEnum = pgEnum('file_kind', ['photo', 'thumbnail', 'trace']);
export const fileStatusEnum = pgEnum('file_status', ['pending', 'public', 'rejected']);
export const stockEventKindEnum = pgEnum('stock_event_kind', ['restock', 'sellout', 'price_drop']);
export const outboxStatusEnum = pgEnum('outbox_status', ['pending', 'sending', 'sent', 'dead', 'skipped']);
export const alertModeEnum = pgEnum('alert_mode', ALERT_MODES);
export const guideStatusEnum = pgEnum('guide_status', GUIDE_STATUSES);
export const pollOutcomeEnum = pgEnum('poll_outcome', [
	'ok',
	'not_modified',
	'timeout',
	'network',
	'http_4xx',
	'http_5xx',
	'rate_limited',
	'robots_disallowed',
	'gone',
	'unreadable',
	'wrong_currency',
	'too_large'
]);

const createdAt = () => timestamp('created_at', { withTimezone: true }).notNull().defaultNow();
const updatedAt = () => timestamp('updated_at', { withTimezone: true }).notNull().defaultNow();

// ---------------------------------------------------------------- Auth.js tables

export const users = pgTable('user', {
	id: text('id')
		.primaryKey()
		.$defaultFn(() => crypto.randomUUID()),
	name: text('name'),
	email: text('email').unique(),
	emailVerified: timestamp('emailVerified', { mode: 'date' }),
	image: text('image'),
	role: roleEnum('role').notNull().default('member'),
	createdAt: timestamp('createdAt', { withTimezone: true }).notNull().defaultNow()
});

export const accounts = pgTable(
	'account',
	{
		userId: text('userId')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		type: text('type').notNull(),
		provider: text('provider').notNull(),
		providerAccountId: text('providerAccountId').notNull(),
		refresh_token: text('refresh_token'),
		access_token: text('access_token'),
		expires_at: integer('expires_at'),
		token_type: text('token_type'),
		scope: text('scope'),
		id_token: text('id_token'),
		session_state: text('session_state')
	},
	(t) => [primaryKey({ columns: [t.provider, t.providerAccountId] })]
);

export const sessions = pgTable(
	'session',
	{
		sessionToken: text('sessionToken').primaryKey(),
		userId: text('userId')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		expires: timestamp('expires', { mode: 'date' }).notNull()
	},
	(t) => [index('session_user_idx').on(t.userId)]
);

export const verificationTokens = pgTable(
	'verificationToken',
	{
		identifier: text('identifier').notNull(),
		token: text('token').notNull(),
		expires: timestamp('expires', { mode: 'date' }).notNull()
	},
	(t) => [primaryKey({ columns: [t.identifier, t.token] })]
);

/** A member's alert preferences (one row per user, created on first change). */
export const memberPrefs = pgTable(
	'member_pref',
	{
		userId: text('user_id')
			.primaryKey()
			.references(() => users.id, { onDelete: 'cascade' }),
		alertMode: alertModeEnum('alert_mode').notNull().default('instant'),
		/** Quiet hours in the member's time zone, as hours 0-23; null means none. */
		quietFrom: smallint('quiet_from'),
		quietTo: smallint('quiet_to'),
		timezone: text('timezone').notNull().default('UTC'),
		digestHour: smallint('digest_hour').notNull().default(8),
		updatedAt: updatedAt()
	},
	(t) => [
		check(
			'member_pref_quiet_hours',
			sql`(${t.quietFrom} is null or ${t.quietFrom} between 0 and 23) and (${t.quietTo} is null or ${t.quietTo} between 0 and 23)`
		),
		check('member_pref_digest_hour', sql`${t.digestHour} between 0 and 23`)
	]
);

// ---------------------------------------------------------------- catalogue

export const chips = pgTable('chip', {
	id: serial('id').primaryKey(),
	slug: text('slug').notNull().unique(),
	name: text('name').notNull(),
	maker: text('maker').notNull(),
	notes: text('notes').notNull().default(''),
	retiredAt: timestamp('retired_at', { withTimezone: true }),
	createdAt: createdAt(),
	updatedAt: updatedAt()
});

export const converters = pgTable(
	'converter',
	{
		id: serial('id').primaryKey(),
		slug: text('slug').notNull().unique(),
		brand: text('brand').notNull(),
		model: text('model').notNull(),
		summary: text('summary').notNull().default(''),
		hasAudioOut: boolean('has_audio_out').notNull().default(false),
		power: powerKindEnum('power').notNull().default('usb-bus'),
		outputs: text('outputs')
			.array()
			.notNull()
			.default(sql`'{vga}'::text[]`),
		retiredAt: timestamp('retired_at', { withTimezone: true }),
		lastReviewedAt: timestamp('last_reviewed_at', { withTimezone: true }),
		createdAt: createdAt(),
		updatedAt: updatedAt()
	},
	(t) => [
		check('converter_slug_format', sql`${t.slug} ~ '^[a-z0-9]+(-[a-z0-9]+)*$'`),
		uniqueIndex('converter_brand_model_uq').on(t.brand, t.model)
	]
);

/**
 * One hardware revision of a converter, identified by its chip and board marking.
 * The band/score columns cache the engine's aggregate over accepted bench runs
 * (recomputed whenever a run is saved, accepted or superseded).
 */
export const revisions = pgTable(
	'revision',
	{
		id: serial('id').primaryKey(),
		converterId: integer('converter_id')
			.notNull()
			.references(() => converters.id, { onDelete: 'restrict' }),
		code: text('code').notNull(),
		chipId: integer('chip_id')
			.notNull()
			.references(() => chips.id, { onDelete: 'restrict' }),
		boardMarking: text('board_marking').notNull().default(''),
		seenFrom: date('seen_from'),
		seenTo: date('seen_to'),
		notes: text('notes').notNull().default(''),
		band: bandEnum('band'),
		score: doublePrecision('score'),
		scoreMin: doublePrecision('score_min'),
		scoreMax: doublePrecision('score_max'),
		/** Worst deviation (IRE) of the run the band was taken from: where the band mark's marker sits. */
		deviationIre: doublePrecision('deviation_ire'),
		/** Why the band is not where the deviation falls ('crushed', 'reversed', 'spread'; see bands.ts). */
		bandReason: text('band_reason'),
		runCount: integer('run_count').notNull().default(0),
		rubricVersion: text('rubric_version'),
		gradedAt: timestamp('graded_at', { withTimezone: true }),
		/** Expected grade while no run is accepted: from the chip's runs elsewhere (src/lib/levels/expected.ts). */
		expectedBand: bandEnum('expected_band'),
		expectedBasis: text('expected_basis'),
		expectedDeviationIre: doublePrecision('expected_deviation_ire'),
		expectedRuns: integer('expected_runs'),
		expectedAt: timestamp('expected_at', { withTimezone: true }),
		retiredAt: timestamp('retired_at', { withTimezone: true }),
		createdAt: createdAt(),
		updatedAt: updatedAt()
	},
	(t) => [
		uniqueIndex('revision_converter_code_uq').on(t.converterId, t.code),
		index('revision_chip_idx').on(t.chipId),
		index('revision_band_idx').on(t.band),
		check('revision_seen_range', sql`${t.seenTo} is null or ${t.seenFrom} is null or ${t.seenTo} >= ${t.seenFrom}`),
		check('revision_score_range', sql`${t.score} is null or ${t.score} between 0 and 100`)
	]
);

// ---------------------------------------------------------------- uploaded files

/** Every stored object (photo, thumbnail, scope trace); bytes live in object storage under storage_key. */
export const files = pgTable(
	'file',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		ownerId: text('owner_id').references(() => users.id, { onDelete: 'set null' }),
		kind: fileKindEnum('kind').notNull(),
		status: fileStatusEnum('status').notNull().default('pending'),
		contentType: text('content_type').notNull(),
		byteSize: integer('byte_size').notNull(),
		sha256: char('sha256', { length: 64 }).notNull(),
		storageKey: text('storage_key').notNull().unique(),
		originalName: text('original_name').notNull().default(''),
		width: integer('width'),
		height: integer('height'),
		thumbnailId: uuid('thumbnail_id').references((): AnyPgColumn => files.id, { onDelete: 'set null' }),
		createdAt: createdAt()
	},
	(t) => [index('file_owner_idx').on(t.ownerId), check('file_size_positive', sql`${t.byteSize} > 0`)]
);

// ---------------------------------------------------------------- bench runs

/** One measured unit: who, when, with what, and the readings (bench_reading). */
export const benchRuns = pgTable(
	'bench_run',
	{
		id: serial('id').primaryKey(),
		revisionId: integer('revision_id')
			.notNull()
			.references(() => revisions.id, { onDelete: 'restrict' }),
		status: runStatusEnum('status').notNull().default('pending'),
		measuredBy: text('measured_by').notNull(),
		submittedById: text('submitted_by_id').references(() => users.id, { onDelete: 'set null' }),
		measuredOn: date('measured_on').notNull(),
		testSource: text('test_source').notNull(),
		pattern: text('pattern').notNull().default('11-step grey ramp, 0-100 IRE'),
		instrument: text('instrument').notNull(),
		termination: terminationEnum('termination').notNull().default('75-ohm'),
		fullScaleMv: doublePrecision('full_scale_mv').notNull().default(700),
		notes: text('notes').notNull().default(''),
		traceFileId: uuid('trace_file_id').references(() => files.id, { onDelete: 'set null' }),
		/** The engine's level report for these readings (a cache; the readings are the truth). */
		report: jsonb('report'),
		band: bandEnum('band'),
		score: doublePrecision('score'),
		rubricVersion: text('rubric_version'),
		supersededById: integer('superseded_by_id').references((): AnyPgColumn => benchRuns.id, {
			onDelete: 'set null'
		}),
		reviewNote: text('review_note'),
		reviewedById: text('reviewed_by_id').references(() => users.id, { onDelete: 'set null' }),
		reviewedAt: timestamp('reviewed_at', { withTimezone: true }),
		createdAt: createdAt(),
		updatedAt: updatedAt()
	},
	(t) => [
		index('bench_run_revision_status_idx').on(t.revisionId, t.status),
		index('bench_run_status_idx').on(t.status),
		check('bench_run_full_scale', sql`${t.fullScaleMv} between 100 and 2000`)
	]
);

/** One IRE step of a bench run: the R, G and B levels in mV. */
export const benchReadings = pgTable(
	'bench_reading',
	{
		benchRunId: integer('bench_run_id')
			.notNull()
			.references(() => benchRuns.id, { onDelete: 'cascade' }),
		ire: smallint('ire').notNull(),
		rMv: doublePrecision('r_mv').notNull(),
		gMv: doublePrecision('g_mv').notNull(),
		bMv: doublePrecision('b_mv').notNull()
	},
	(t) => [
		primaryKey({ columns: [t.benchRunId, t.ire] }),
		check('bench_reading_ire_step', sql`${t.ire} between 0 and 100 and ${t.ire} % 10 = 0`),
		check(
			'bench_reading_mv_range',
			// a few mV below blanking is a valid reading (the level engine's rubric decides how many)
			sql`${t.rMv} between -100 and 2000 and ${t.gMv} between -100 and 2000 and ${t.bMv} between -100 and 2000`
		)
	]
);

// ---------------------------------------------------------------- shops and listings

export const shops = pgTable(
	'shop',
	{
		id: serial('id').primaryKey(),
		slug: text('slug').notNull().unique(),
		name: text('name').notNull(),
		region: regionEnum('region').notNull(),
		currency: char('currency', { length: 3 }).notNull(),
		shipsTo: regionEnum('ships_to')
			.array()
			.notNull()
			.default(sql`'{}'::region[]`),
		baseUrl: text('base_url').notNull(),
		defaultFormat: feedFormatEnum('default_format').notNull(),
		/** Curator-set CSS selectors or JSON mapping shared by the shop's listings. */
		feedConfig: jsonb('feed_config')
			.notNull()
			.default(sql`'{}'::jsonb`),
		maxConcurrency: smallint('max_concurrency').notNull().default(2),
		minSpacingMs: integer('min_spacing_ms').notNull().default(1000),
		active: boolean('active').notNull().default(true),
		createdAt: createdAt(),
		updatedAt: updatedAt()
	},
	(t) => [
		check('shop_currency_iso', sql`${t.currency} ~ '^[A-Z]{3}$'`),
		check('shop_concurrency', sql`${t.maxConcurrency} between 1 and 16`),
		check('shop_spacing', sql`${t.minSpacingMs} >= 0`)
	]
);

/** One converter's page at one shop. */
export const listings = pgTable(
	'listing',
	{
		id: serial('id').primaryKey(),
		shopId: integer('shop_id')
			.notNull()
			.references(() => shops.id, { onDelete: 'restrict' }),
		converterId: integer('converter_id')
			.notNull()
			.references(() => converters.id, { onDelete: 'restrict' }),
		url: text('url').notNull(),
		format: feedFormatEnum('format').notNull(),
		/** Overrides the shop's feed_config for this page (selectors or API mapping). */
		feedConfig: jsonb('feed_config'),
		pollIntervalMinutes: integer('poll_interval_minutes').notNull().default(60),
		active: boolean('active').notNull().default(true),
		delistedAt: timestamp('delisted_at', { withTimezone: true }),
		title: text('title'),
		createdAt: createdAt(),
		updatedAt: updatedAt()
	},
	(t) => [
		uniqueIndex('listing_url_uq').on(t.url),
		index('listing_converter_idx').on(t.converterId),
		index('listing_shop_idx').on(t.shopId),
		check('listing_interval', sql`${t.pollIntervalMinutes} between 1 and 10080`)
	]
);

/**
 * Polling state per listing, kept apart from history: "last checked" moves on every poll,
 * while observations only grow when price, currency or stock state change.
 */
export const listingStates = pgTable(
	'listing_state',
	{
		listingId: integer('listing_id')
			.primaryKey()
			.references(() => listings.id, { onDelete: 'cascade' }),
		nextPollAt: timestamp('next_poll_at', { withTimezone: true }).notNull().defaultNow(),
		leaseOwner: text('lease_owner'),
		leaseUntil: timestamp('lease_until', { withTimezone: true }),
		pollRequestedAt: timestamp('poll_requested_at', { withTimezone: true }),
		lastCheckedAt: timestamp('last_checked_at', { withTimezone: true }),
		lastSuccessAt: timestamp('last_success_at', { withTimezone: true }),
		lastOutcome: pollOutcomeEnum('last_outcome'),
		lastErrorAt: timestamp('last_error_at', { withTimezone: true }),
		lastError: text('last_error'),
		consecutiveFailures: integer('consecutive_failures').notNull().default(0),
		etag: text('etag'),
		lastModified: text('last_modified'),
		currentPriceMinor: bigint('current_price_minor', { mode: 'number' }),
		currentCurrency: char('current_currency', { length: 3 }),
		currentStock: stockStateEnum('current_stock').notNull().default('unknown'),
		currentSince: timestamp('current_since', { withTimezone: true }),
		/** 404 answers in a row; the poller marks the listing delisted after a few (see polling/config.ts). */
		consecutiveNotFound: integer('consecutive_not_found').notNull().default(0)
	},
	(t) => [
		index('listing_state_due_idx').on(t.nextPollAt),
		index('listing_state_requested_idx')
			.on(t.pollRequestedAt)
			.where(sql`${t.pollRequestedAt} is not null`)
	]
);

/** A change point: a row is written only when price, currency or stock state change. */
export const observations = pgTable(
	'observation',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		listingId: integer('listing_id')
			.notNull()
			.references(() => listings.id, { onDelete: 'cascade' }),
		observedAt: timestamp('observed_at', { withTimezone: true }).notNull(),
		priceMinor: bigint('price_minor', { mode: 'number' }),
		currency: char('currency', { length: 3 }),
		stock: stockStateEnum('stock').notNull()
	},
	(t) => [
		index('observation_listing_time_idx').on(t.listingId, t.observedAt),
		check('observation_price_positive', sql`${t.priceMinor} is null or ${t.priceMinor} > 0`)
	]
);

/** Restock / sell-out / price-drop transitions, written in the same transaction as the observation. */
export const stockEvents = pgTable(
	'stock_event',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		listingId: integer('listing_id')
			.notNull()
			.references(() => listings.id, { onDelete: 'cascade' }),
		observationId: bigint('observation_id', { mode: 'number' })
			.notNull()
			.references(() => observations.id, { onDelete: 'cascade' }),
		kind: stockEventKindEnum('kind').notNull(),
		at: timestamp('at', { withTimezone: true }).notNull(),
		priceMinor: bigint('price_minor', { mode: 'number' }),
		currency: char('currency', { length: 3 }),
		previousStock: stockStateEnum('previous_stock'),
		/** Set when a restock falls inside the listing's quiet period: recorded, but no alerts. */
		quiet: boolean('quiet').notNull().default(false)
	},
	(t) => [
		uniqueIndex('stock_event_observation_kind_uq').on(t.observationId, t.kind),
		index('stock_event_kind_time_idx').on(t.kind, t.at),
		index('stock_event_listing_time_idx').on(t.listingId, t.at)
	]
);

/** Poll outcomes counted per shop per day, for the health view. */
export const pollCounts = pgTable(
	'poll_count',
	{
		shopId: integer('shop_id')
			.notNull()
			.references(() => shops.id, { onDelete: 'cascade' }),
		day: date('day').notNull(),
		outcome: pollOutcomeEnum('outcome').notNull(),
		count: integer('count').notNull().default(0),
		lastAt: timestamp('last_at', { withTimezone: true }).notNull().defaultNow(),
		lastDetail: text('last_detail')
	},
	(t) => [primaryKey({ columns: [t.shopId, t.day, t.outcome] })]
);

/**
 * Shop-wide polling state that every poller worker must see: a pause after a 429/503 with
 * Retry-After (RFC 9110 section 10.2.3), which stops all of the shop's listings, "poll now" included.
 */
export const shopPollStates = pgTable('shop_poll_state', {
	shopId: integer('shop_id')
		.primaryKey()
		.references(() => shops.id, { onDelete: 'cascade' }),
	pausedUntil: timestamp('paused_until', { withTimezone: true }),
	pauseReason: text('pause_reason'),
	updatedAt: updatedAt()
});

/** Dated exchange rates: 1 unit of `base` buys `rate` units of `quote`. */
export const exchangeRates = pgTable(
	'exchange_rate',
	{
		base: char('base', { length: 3 }).notNull(),
		quote: char('quote', { length: 3 }).notNull(),
		day: date('day').notNull(),
		rate: numeric('rate', { precision: 18, scale: 8 }).notNull(),
		source: text('source').notNull().default('manual'),
		createdAt: createdAt()
	},
	(t) => [primaryKey({ columns: [t.base, t.quote, t.day] }), check('exchange_rate_positive', sql`${t.rate} > 0`)]
);

// ---------------------------------------------------------------- teardown reports

/** "I opened a unit bought at shop S in month M and found chip C" (with a board photo). */
export const teardownReports = pgTable(
	'teardown_report',
	{
		id: serial('id').primaryKey(),
		converterId: integer('converter_id')
			.notNull()
			.references(() => converters.id, { onDelete: 'restrict' }),
		revisionId: integer('revision_id').references(() => revisions.id, { onDelete: 'set null' }),
		shopId: integer('shop_id').references(() => shops.id, { onDelete: 'set null' }),
		shopNameOther: text('shop_name_other'),
		purchaseMonth: date('purchase_month').notNull(),
		chipId: integer('chip_id').references(() => chips.id, { onDelete: 'set null' }),
		chipText: text('chip_text').notNull().default(''),
		boardMarking: text('board_marking').notNull().default(''),
		photoFileId: uuid('photo_file_id').references(() => files.id, { onDelete: 'set null' }),
		notes: text('notes').notNull().default(''),
		status: reviewStatusEnum('status').notNull().default('pending'),
		reviewReason: text('review_reason'),
		submittedById: text('submitted_by_id').references(() => users.id, { onDelete: 'set null' }),
		reviewedById: text('reviewed_by_id').references(() => users.id, { onDelete: 'set null' }),
		reviewedAt: timestamp('reviewed_at', { withTimezone: true }),
		createdAt: createdAt()
	},
	(t) => [
		index('teardown_converter_status_idx').on(t.converterId, t.status),
		index('teardown_status_idx').on(t.status),
		check('teardown_month_first_day', sql`extract(day from ${t.purchaseMonth}) = 1`)
	]
);

// ---------------------------------------------------------------- watches and alerts

/** A subscriber's alert rule: one converter, or a rule over the catalogue. */
export const watches = pgTable(
	'watch',
	{
		id: serial('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		converterId: integer('converter_id').references(() => converters.id, { onDelete: 'cascade' }),
		minBand: bandEnum('min_band'),
		maxPriceMinor: bigint('max_price_minor', { mode: 'number' }),
		priceCurrency: char('price_currency', { length: 3 }),
		region: regionEnum('region'),
		needsAudio: boolean('needs_audio').notNull().default(false),
		shopIds: integer('shop_ids').array(),
		alsoPriceDrops: boolean('also_price_drops').notNull().default(false),
		/** Match a converter whose revision has only an expected grade (not yet measured). */
		includeExpected: boolean('include_expected').notNull().default(false),
		paused: boolean('paused').notNull().default(false),
		createdAt: createdAt(),
		updatedAt: updatedAt()
	},
	(t) => [
		index('watch_user_idx').on(t.userId),
		index('watch_converter_idx').on(t.converterId),
		check('watch_price_currency', sql`${t.maxPriceMinor} is null or ${t.priceCurrency} is not null`)
	]
);

/** One message per (watch, stock event); the unique key makes replays and second workers harmless. */
export const alertOutbox = pgTable(
	'alert_outbox',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		watchId: integer('watch_id')
			.notNull()
			.references(() => watches.id, { onDelete: 'cascade' }),
		stockEventId: bigint('stock_event_id', { mode: 'number' })
			.notNull()
			.references(() => stockEvents.id, { onDelete: 'cascade' }),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		mode: alertModeEnum('mode').notNull().default('instant'),
		status: outboxStatusEnum('status').notNull().default('pending'),
		attempts: integer('attempts').notNull().default(0),
		nextAttemptAt: timestamp('next_attempt_at', { withTimezone: true }).notNull().defaultNow(),
		leaseOwner: text('lease_owner'),
		leaseUntil: timestamp('lease_until', { withTimezone: true }),
		lastError: text('last_error'),
		messageId: text('message_id'),
		digestKey: text('digest_key'),
		sentAt: timestamp('sent_at', { withTimezone: true }),
		createdAt: createdAt()
	},
	(t) => [
		uniqueIndex('alert_outbox_watch_event_uq').on(t.watchId, t.stockEventId),
		index('alert_outbox_due_idx').on(t.status, t.nextAttemptAt),
		index('alert_outbox_user_idx').on(t.userId)
	]
);

// ---------------------------------------------------------------- guides

export const guides = pgTable('guide', {
	id: serial('id').primaryKey(),
	slug: text('slug').notNull().unique(),
	title: text('title').notNull(),
	summary: text('summary').notNull().default(''),
	bodyMarkdown: text('body_markdown').notNull().default(''),
	status: guideStatusEnum('status').notNull().default('draft'),
	authorId: text('author_id').references(() => users.id, { onDelete: 'set null' }),
	publishedAt: timestamp('published_at', { withTimezone: true }),
	createdAt: createdAt(),
	updatedAt: updatedAt()
});

/** A converter recommended by a guide, with the band it had when picked (to flag re-grades). */
export const guidePicks = pgTable(
	'guide_pick',
	{
		guideId: integer('guide_id')
			.notNull()
			.references(() => guides.id, { onDelete: 'cascade' }),
		converterId: integer('converter_id')
			.notNull()
			.references(() => converters.id, { onDelete: 'restrict' }),
		position: smallint('position').notNull().default(0),
		note: text('note').notNull().default(''),
		bandAtPick: bandEnum('band_at_pick')
	},
	(t) => [primaryKey({ columns: [t.guideId, t.converterId] })]
);

// ---------------------------------------------------------------- audit log

/** Every curator and admin change: who, when, what, before and after. */
export const auditLog = pgTable(
	'audit_log',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		actorId: text('actor_id').references(() => users.id, { onDelete: 'set null' }),
		action: text('action').notNull(),
		entity: text('entity').notNull(),
		entityId: text('entity_id').notNull(),
		before: jsonb('before'),
		after: jsonb('after'),
		reason: text('reason'),
		at: timestamp('at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [
		index('audit_entity_idx').on(t.entity, t.entityId),
		index('audit_actor_idx').on(t.actorId),
		index('audit_time_idx').on(t.at)
	]
);

// ---------------------------------------------------------------- rate limits

/**
 * Fixed-window request counters shared by every app instance (sign-in e-mails per address and
 * per client). One row per key; housekeeping deletes rows whose window has long ended.
 */
export const rateLimits = pgTable('rate_limit', {
	key: text('key').primaryKey(),
	windowStart: timestamp('window_start', { withTimezone: true }).notNull(),
	hits: integer('hits').notNull()
});

// ---------------------------------------------------------------- public read model

/**
 * What the public pages show per converter and region (the read model): the catalogue entry
 * priced in the region's currency (`entry`, a CatalogueEntry) plus the columns the catalogue
 * filters and sorts on. Written only by src/lib/server/queries/read-model.ts, in the
 * transactions that change its inputs; triggers (migration 0006) mark converters in
 * `card_dirty` when anything it reads changes, so no writer can leave a card stale.
 */
export const converterCards = pgTable(
	'converter_card',
	{
		region: regionEnum('region').notNull(),
		converterId: integer('converter_id')
			.notNull()
			.references(() => converters.id, { onDelete: 'cascade' }),
		slug: text('slug').notNull(),
		brand: text('brand').notNull(),
		model: text('model').notNull(),
		hasAudioOut: boolean('has_audio_out').notNull(),
		power: powerKindEnum('power').notNull(),
		/** bandRank of the lead band (ungraded = 5). */
		bandRank: smallint('band_rank').notNull(),
		/** The lead score, -1 when ungraded (the catalogue's sort treats it so). */
		score: doublePrecision('score').notNull(),
		/** The best buyable offer in EUR, unrounded (linear in any display currency); null when none. */
		bestEur: doublePrecision('best_eur'),
		/** 0 in stock at some shop of the region, 1 only orderable, 2 not buyable (finder order). */
		buyable: smallint('buyable').notNull(),
		inStockShops: integer('in_stock_shops').notNull(),
		entry: jsonb('entry').notNull(),
		/**
		 * The entry as /api/v1/converters lists it, as JSON text (read-model.ts, `apiItemText`), so the
		 * list is sent without parsing and serialising every entry; null until built.
		 */
		apiItem: text('api_item'),
		/** API_ITEM_SHAPE of the code that built api_item: items of another shape are built from `entry` on read. */
		apiShape: smallint('api_shape'),
		/** The best offer's listing (entry.best.listingId), whose last-checked time reads join on. */
		bestListingId: integer('best_listing_id'),
		/**
		 * The catalogue's card for this entry as HTML, rendered by the app (server/rendered-html.ts) the
		 * first time a page shows it and kept until the card is rebuilt (a rebuild sets it null).
		 */
		cardHtml: text('card_html'),
		/** The app build that rendered card_html: another build renders the card afresh. */
		cardHtmlBuild: text('card_html_build'),
		refreshedAt: timestamp('refreshed_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [
		primaryKey({ columns: [t.region, t.converterId] }),
		index('converter_card_band_idx').on(t.region, t.bandRank, t.score.desc(), t.bestEur.asc().nullsLast()),
		index('converter_card_price_idx').on(t.region, t.bestEur.asc().nullsLast(), t.bandRank),
		index('converter_card_converter_idx').on(t.converterId)
	]
);

/**
 * How many cards each region has, kept by statement triggers on converter_card (migration 0017:
 * every insert, delete and truncate moves it in the same transaction), so an unfiltered catalogue
 * page reads its "N converters" and page count instead of counting the region's cards.
 */
export const regionCardCounts = pgTable('region_card_count', {
	region: regionEnum('region').primaryKey(),
	cards: integer('cards').notNull()
});

/** Converters whose cards must be rebuilt (filled by triggers, emptied by the rebuild). */
export const cardDirty = pgTable('card_dirty', {
	converterId: integer('converter_id').primaryKey()
});

/** PostgreSQL's pg_snapshot and xid8, kept as their text forms (compared in SQL only). */
const pgSnapshot = customType<{ data: string }>({ dataType: () => 'pg_snapshot' });
const xid8 = customType<{ data: string }>({ dataType: () => 'xid8' });

/**
 * The converter page's read model (src/lib/server/queries/converter-doc.ts): per live converter,
 * what its page and /api/v1/converters/{slug} show whatever the visitor's region and currency,
 * with the snapshot it was built from.
 */
export const converterDetails = pgTable('converter_detail', {
	converterId: integer('converter_id')
		.primaryKey()
		.references(() => converters.id, { onDelete: 'cascade' }),
	/** The document without its revisions' bench runs (each revision's runsDetail is empty here). */
	doc: json('doc').notNull(),
	/**
	 * Each revision's bench runs with readings and reports, in the document's revision order: about
	 * three quarters of the document, read only when the page renders its panels afresh (or the API
	 * and compare page, which show them), not with panels this build has stored.
	 */
	runs: json('runs'),
	/** DOC_SHAPE of the code that built it: a document from older code is built again. */
	shape: integer('shape').notNull().default(0),
	snapshot: pgSnapshot('snapshot').notNull(),
	builtAt: timestamp('built_at', { withTimezone: true }).notNull(),
	/**
	 * The page's revision panels as the one HTML text the page shows, rendered by the app from this
	 * document the first time a page shows it (RevisionHtml in converter-doc.ts); null until then, and
	 * again whenever the document is replaced.
	 */
	revisionsHtml: text('revisions_html'),
	/** The converter name the stored panels show (a rename renders them afresh). */
	revisionsName: text('revisions_name'),
	/** The app build that rendered revisions_html: another build renders the panels afresh. */
	htmlBuild: text('html_build')
});

/**
 * Writes to a converter's page inputs, one row per converter and writing transaction (filled by
 * triggers, migration 0012): a document whose snapshot does not see the transaction is stale.
 */
export const detailStale = pgTable(
	'detail_stale',
	{
		converterId: integer('converter_id').notNull(),
		xid: xid8('xid')
			.notNull()
			.default(sql`pg_current_xact_id()`),
		/** When the writing statement ran (not its transaction's start: pruning goes by age). */
		at: timestamp('at', { withTimezone: true })
			.notNull()
			.default(sql`statement_timestamp()`)
	},
	(t) => [primaryKey({ columns: [t.converterId, t.xid] })]
);

/**
 * Each shop's public record (90 days of all its listings' history, src/lib/server/queries/shops.ts)
 * as the jobs process last worked it out: listing rows read the line from here instead of summing
 * a shop's whole history in a page request.
 */
export const shopRecordRows = pgTable('shop_record', {
	shopId: integer('shop_id')
		.primaryKey()
		.references(() => shops.id, { onDelete: 'cascade' }),
	line: text('line'),
	computedAt: timestamp('computed_at', { withTimezone: true }).notNull()
});

// ---------------------------------------------------------------- tester consistency and expected grades

export const zSignalEnum = pgEnum('z_signal', ['satisfactory', 'questionable', 'action']);
/** A flagged run's review: open in the queue, kept as is, superseded, or sent back to re-measure. */
export const checkStateEnum = pgEnum('check_state', ['open', 'kept', 'superseded', 'remeasure']);

/**
 * A bench run's z-scores against the consensus of its revision (ISO 13528 Algorithm A over
 * the runs of two or more testers). Recomputed whenever the revision's runs change.
 */
export const runChecks = pgTable(
	'run_check',
	{
		benchRunId: integer('bench_run_id')
			.primaryKey()
			.references(() => benchRuns.id, { onDelete: 'cascade' }),
		signal: zSignalEnum('signal').notNull(),
		worstZ: doublePrecision('worst_z').notNull(),
		reason: text('reason').notNull(),
		/** [{ ire, channel, reading, z, signal }] in IRE. */
		cells: jsonb('cells').notNull(),
		testers: integer('testers').notNull(),
		computedAt: timestamp('computed_at', { withTimezone: true }).notNull(),
		state: checkStateEnum('state'),
		note: text('note'),
		reviewedById: text('reviewed_by_id').references(() => users.id, { onDelete: 'set null' }),
		reviewedAt: timestamp('reviewed_at', { withTimezone: true })
	},
	(t) => [index('run_check_state_idx').on(t.state)]
);

export const gradeKindEnum = pgEnum('grade_kind', ['measured', 'expected']);

/** A revision's grade history: every change of its measured or expected band. */
export const gradeHistory = pgTable(
	'grade_history',
	{
		id: serial('id').primaryKey(),
		revisionId: integer('revision_id')
			.notNull()
			.references(() => revisions.id, { onDelete: 'cascade' }),
		kind: gradeKindEnum('kind').notNull(),
		/** Null: the grade of this kind was cleared. */
		band: bandEnum('band'),
		detail: text('detail').notNull().default(''),
		at: timestamp('at', { withTimezone: true }).notNull()
	},
	(t) => [index('grade_history_revision_idx').on(t.revisionId, t.at)]
);

/** Latest result of a periodic statistic (e.g. the expected-grade backtest), by name. */
export const statSnapshots = pgTable('stat_snapshot', {
	name: text('name').primaryKey(),
	value: jsonb('value').notNull(),
	computedAt: timestamp('computed_at', { withTimezone: true }).notNull()
});

// ---------------------------------------------------------------- value types

export type Role = (typeof roleEnum.enumValues)[number];
export type Band = (typeof bandEnum.enumValues)[number];
export type StockState = (typeof stockStateEnum.enumValues)[number];
export type Region = (typeof regionEnum.enumValues)[number];
export type FeedFormat = (typeof feedFormatEnum.enumValues)[number];
export type RunStatus = (typeof runStatusEnum.enumValues)[number];
export type PollOutcome = (typeof pollOutcomeEnum.enumValues)[number];
export type ZSignal = (typeof zSignalEnum.enumValues)[number];
export type CheckState = (typeof checkStateEnum.enumValues)[number];
export type GradeKind = (typeof gradeKindEnum.enumValues)[number];
