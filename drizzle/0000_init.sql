CREATE TYPE "public"."alert_mode" AS ENUM('instant', 'digest');--> statement-breakpoint
CREATE TYPE "public"."band" AS ENUM('exact', 'close', 'fair', 'poor', 'failing');--> statement-breakpoint
CREATE TYPE "public"."feed_format" AS ENUM('jsonld', 'microdata', 'selectors', 'api');--> statement-breakpoint
CREATE TYPE "public"."file_kind" AS ENUM('photo', 'thumbnail', 'trace');--> statement-breakpoint
CREATE TYPE "public"."file_status" AS ENUM('pending', 'public', 'rejected');--> statement-breakpoint
CREATE TYPE "public"."guide_status" AS ENUM('draft', 'published', 'retired');--> statement-breakpoint
CREATE TYPE "public"."outbox_status" AS ENUM('pending', 'sending', 'sent', 'dead', 'skipped');--> statement-breakpoint
CREATE TYPE "public"."poll_outcome" AS ENUM('ok', 'not_modified', 'timeout', 'network', 'http_4xx', 'http_5xx', 'rate_limited', 'robots_disallowed', 'gone', 'unreadable', 'wrong_currency', 'too_large');--> statement-breakpoint
CREATE TYPE "public"."power_kind" AS ENUM('usb-bus', 'usb-adapter', 'barrel');--> statement-breakpoint
CREATE TYPE "public"."region" AS ENUM('na', 'eu', 'uk', 'jp', 'au');--> statement-breakpoint
CREATE TYPE "public"."review_status" AS ENUM('pending', 'verified', 'rejected');--> statement-breakpoint
CREATE TYPE "public"."role" AS ENUM('member', 'curator', 'admin');--> statement-breakpoint
CREATE TYPE "public"."run_status" AS ENUM('pending', 'accepted', 'rejected', 'superseded');--> statement-breakpoint
CREATE TYPE "public"."stock_event_kind" AS ENUM('restock', 'sellout', 'price_drop');--> statement-breakpoint
CREATE TYPE "public"."stock_state" AS ENUM('in_stock', 'out_of_stock', 'preorder', 'backorder', 'discontinued', 'unknown');--> statement-breakpoint
CREATE TYPE "public"."termination" AS ENUM('75-ohm', 'unterminated', 'unknown');--> statement-breakpoint
CREATE TABLE "account" (
	"userId" text NOT NULL,
	"type" text NOT NULL,
	"provider" text NOT NULL,
	"providerAccountId" text NOT NULL,
	"refresh_token" text,
	"access_token" text,
	"expires_at" integer,
	"token_type" text,
	"scope" text,
	"id_token" text,
	"session_state" text,
	CONSTRAINT "account_provider_providerAccountId_pk" PRIMARY KEY("provider","providerAccountId")
);
--> statement-breakpoint
CREATE TABLE "alert_outbox" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"watch_id" integer NOT NULL,
	"stock_event_id" bigint NOT NULL,
	"user_id" text NOT NULL,
	"mode" "alert_mode" DEFAULT 'instant' NOT NULL,
	"status" "outbox_status" DEFAULT 'pending' NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"next_attempt_at" timestamp with time zone DEFAULT now() NOT NULL,
	"lease_owner" text,
	"lease_until" timestamp with time zone,
	"last_error" text,
	"message_id" text,
	"digest_key" text,
	"sent_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "audit_log" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"actor_id" text,
	"action" text NOT NULL,
	"entity" text NOT NULL,
	"entity_id" text NOT NULL,
	"before" jsonb,
	"after" jsonb,
	"reason" text,
	"at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "bench_reading" (
	"bench_run_id" integer NOT NULL,
	"ire" smallint NOT NULL,
	"r_mv" double precision NOT NULL,
	"g_mv" double precision NOT NULL,
	"b_mv" double precision NOT NULL,
	CONSTRAINT "bench_reading_bench_run_id_ire_pk" PRIMARY KEY("bench_run_id","ire"),
	CONSTRAINT "bench_reading_ire_step" CHECK ("bench_reading"."ire" between 0 and 100 and "bench_reading"."ire" % 10 = 0),
	CONSTRAINT "bench_reading_mv_range" CHECK ("bench_reading"."r_mv" between 0 and 2000 and "bench_reading"."g_mv" between 0 and 2000 and "bench_reading"."b_mv" between 0 and 2000)
);
--> statement-breakpoint
CREATE TABLE "bench_run" (
	"id" serial PRIMARY KEY NOT NULL,
	"revision_id" integer NOT NULL,
	"status" "run_status" DEFAULT 'pending' NOT NULL,
	"measured_by" text NOT NULL,
	"submitted_by_id" text,
	"measured_on" date NOT NULL,
	"test_source" text NOT NULL,
	"pattern" text DEFAULT '11-step grey ramp, 0-100 IRE' NOT NULL,
	"instrument" text NOT NULL,
	"termination" "termination" DEFAULT '75-ohm' NOT NULL,
	"full_scale_mv" double precision DEFAULT 700 NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"trace_file_id" uuid,
	"report" jsonb,
	"band" "band",
	"score" double precision,
	"rubric_version" text,
	"superseded_by_id" integer,
	"review_note" text,
	"reviewed_by_id" text,
	"reviewed_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "bench_run_full_scale" CHECK ("bench_run"."full_scale_mv" between 100 and 2000)
);
--> statement-breakpoint
CREATE TABLE "chip" (
	"id" serial PRIMARY KEY NOT NULL,
	"slug" text NOT NULL,
	"name" text NOT NULL,
	"maker" text NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"retired_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "chip_slug_unique" UNIQUE("slug")
);
--> statement-breakpoint
CREATE TABLE "converter" (
	"id" serial PRIMARY KEY NOT NULL,
	"slug" text NOT NULL,
	"brand" text NOT NULL,
	"model" text NOT NULL,
	"summary" text DEFAULT '' NOT NULL,
	"has_audio_out" boolean DEFAULT false NOT NULL,
	"power" "power_kind" DEFAULT 'usb-bus' NOT NULL,
	"outputs" text[] DEFAULT '{vga}'::text[] NOT NULL,
	"retired_at" timestamp with time zone,
	"last_reviewed_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "converter_slug_unique" UNIQUE("slug"),
	CONSTRAINT "converter_slug_format" CHECK ("converter"."slug" ~ '^[a-z0-9]+(-[a-z0-9]+)*$')
);
--> statement-breakpoint
CREATE TABLE "exchange_rate" (
	"base" char(3) NOT NULL,
	"quote" char(3) NOT NULL,
	"day" date NOT NULL,
	"rate" numeric(18, 8) NOT NULL,
	"source" text DEFAULT 'manual' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "exchange_rate_base_quote_day_pk" PRIMARY KEY("base","quote","day"),
	CONSTRAINT "exchange_rate_positive" CHECK ("exchange_rate"."rate" > 0)
);
--> statement-breakpoint
CREATE TABLE "file" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"owner_id" text,
	"kind" "file_kind" NOT NULL,
	"status" "file_status" DEFAULT 'pending' NOT NULL,
	"content_type" text NOT NULL,
	"byte_size" integer NOT NULL,
	"sha256" char(64) NOT NULL,
	"storage_key" text NOT NULL,
	"original_name" text DEFAULT '' NOT NULL,
	"width" integer,
	"height" integer,
	"thumbnail_id" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "file_storage_key_unique" UNIQUE("storage_key"),
	CONSTRAINT "file_size_positive" CHECK ("file"."byte_size" > 0)
);
--> statement-breakpoint
CREATE TABLE "guide_pick" (
	"guide_id" integer NOT NULL,
	"converter_id" integer NOT NULL,
	"position" smallint DEFAULT 0 NOT NULL,
	"note" text DEFAULT '' NOT NULL,
	"band_at_pick" "band",
	CONSTRAINT "guide_pick_guide_id_converter_id_pk" PRIMARY KEY("guide_id","converter_id")
);
--> statement-breakpoint
CREATE TABLE "guide" (
	"id" serial PRIMARY KEY NOT NULL,
	"slug" text NOT NULL,
	"title" text NOT NULL,
	"summary" text DEFAULT '' NOT NULL,
	"body_markdown" text DEFAULT '' NOT NULL,
	"status" "guide_status" DEFAULT 'draft' NOT NULL,
	"author_id" text,
	"published_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "guide_slug_unique" UNIQUE("slug")
);
--> statement-breakpoint
CREATE TABLE "listing_state" (
	"listing_id" integer PRIMARY KEY NOT NULL,
	"next_poll_at" timestamp with time zone DEFAULT now() NOT NULL,
	"lease_owner" text,
	"lease_until" timestamp with time zone,
	"poll_requested_at" timestamp with time zone,
	"last_checked_at" timestamp with time zone,
	"last_success_at" timestamp with time zone,
	"last_outcome" "poll_outcome",
	"last_error_at" timestamp with time zone,
	"last_error" text,
	"consecutive_failures" integer DEFAULT 0 NOT NULL,
	"etag" text,
	"last_modified" text,
	"current_price_minor" bigint,
	"current_currency" char(3),
	"current_stock" "stock_state" DEFAULT 'unknown' NOT NULL,
	"current_since" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "listing" (
	"id" serial PRIMARY KEY NOT NULL,
	"shop_id" integer NOT NULL,
	"converter_id" integer NOT NULL,
	"url" text NOT NULL,
	"format" "feed_format" NOT NULL,
	"feed_config" jsonb,
	"poll_interval_minutes" integer DEFAULT 60 NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"delisted_at" timestamp with time zone,
	"title" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "listing_interval" CHECK ("listing"."poll_interval_minutes" between 1 and 10080)
);
--> statement-breakpoint
CREATE TABLE "member_pref" (
	"user_id" text PRIMARY KEY NOT NULL,
	"alert_mode" "alert_mode" DEFAULT 'instant' NOT NULL,
	"quiet_from" smallint,
	"quiet_to" smallint,
	"timezone" text DEFAULT 'UTC' NOT NULL,
	"digest_hour" smallint DEFAULT 8 NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "member_pref_quiet_hours" CHECK (("member_pref"."quiet_from" is null or "member_pref"."quiet_from" between 0 and 23) and ("member_pref"."quiet_to" is null or "member_pref"."quiet_to" between 0 and 23)),
	CONSTRAINT "member_pref_digest_hour" CHECK ("member_pref"."digest_hour" between 0 and 23)
);
--> statement-breakpoint
CREATE TABLE "observation" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"listing_id" integer NOT NULL,
	"observed_at" timestamp with time zone NOT NULL,
	"price_minor" bigint,
	"currency" char(3),
	"stock" "stock_state" NOT NULL,
	CONSTRAINT "observation_price_positive" CHECK ("observation"."price_minor" is null or "observation"."price_minor" > 0)
);
--> statement-breakpoint
CREATE TABLE "poll_count" (
	"shop_id" integer NOT NULL,
	"day" date NOT NULL,
	"outcome" "poll_outcome" NOT NULL,
	"count" integer DEFAULT 0 NOT NULL,
	"last_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_detail" text,
	CONSTRAINT "poll_count_shop_id_day_outcome_pk" PRIMARY KEY("shop_id","day","outcome")
);
--> statement-breakpoint
CREATE TABLE "revision" (
	"id" serial PRIMARY KEY NOT NULL,
	"converter_id" integer NOT NULL,
	"code" text NOT NULL,
	"chip_id" integer NOT NULL,
	"board_marking" text DEFAULT '' NOT NULL,
	"seen_from" date,
	"seen_to" date,
	"notes" text DEFAULT '' NOT NULL,
	"band" "band",
	"score" double precision,
	"score_min" double precision,
	"score_max" double precision,
	"run_count" integer DEFAULT 0 NOT NULL,
	"rubric_version" text,
	"graded_at" timestamp with time zone,
	"retired_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "revision_seen_range" CHECK ("revision"."seen_to" is null or "revision"."seen_from" is null or "revision"."seen_to" >= "revision"."seen_from"),
	CONSTRAINT "revision_score_range" CHECK ("revision"."score" is null or "revision"."score" between 0 and 100)
);
--> statement-breakpoint
CREATE TABLE "session" (
	"sessionToken" text PRIMARY KEY NOT NULL,
	"userId" text NOT NULL,
	"expires" timestamp NOT NULL
);
--> statement-breakpoint
CREATE TABLE "shop" (
	"id" serial PRIMARY KEY NOT NULL,
	"slug" text NOT NULL,
	"name" text NOT NULL,
	"region" "region" NOT NULL,
	"currency" char(3) NOT NULL,
	"ships_to" "region"[] DEFAULT '{}'::region[] NOT NULL,
	"base_url" text NOT NULL,
	"default_format" "feed_format" NOT NULL,
	"feed_config" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"max_concurrency" smallint DEFAULT 2 NOT NULL,
	"min_spacing_ms" integer DEFAULT 1000 NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "shop_slug_unique" UNIQUE("slug"),
	CONSTRAINT "shop_currency_iso" CHECK ("shop"."currency" ~ '^[A-Z]{3}$'),
	CONSTRAINT "shop_concurrency" CHECK ("shop"."max_concurrency" between 1 and 16),
	CONSTRAINT "shop_spacing" CHECK ("shop"."min_spacing_ms" >= 0)
);
--> statement-breakpoint
CREATE TABLE "stock_event" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"listing_id" integer NOT NULL,
	"observation_id" bigint NOT NULL,
	"kind" "stock_event_kind" NOT NULL,
	"at" timestamp with time zone NOT NULL,
	"price_minor" bigint,
	"currency" char(3),
	"previous_stock" "stock_state",
	"quiet" boolean DEFAULT false NOT NULL
);
--> statement-breakpoint
CREATE TABLE "teardown_report" (
	"id" serial PRIMARY KEY NOT NULL,
	"converter_id" integer NOT NULL,
	"revision_id" integer,
	"shop_id" integer,
	"shop_name_other" text,
	"purchase_month" date NOT NULL,
	"chip_id" integer,
	"chip_text" text DEFAULT '' NOT NULL,
	"board_marking" text DEFAULT '' NOT NULL,
	"photo_file_id" uuid,
	"notes" text DEFAULT '' NOT NULL,
	"status" "review_status" DEFAULT 'pending' NOT NULL,
	"review_reason" text,
	"submitted_by_id" text,
	"reviewed_by_id" text,
	"reviewed_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "teardown_month_first_day" CHECK (extract(day from "teardown_report"."purchase_month") = 1)
);
--> statement-breakpoint
CREATE TABLE "user" (
	"id" text PRIMARY KEY NOT NULL,
	"name" text,
	"email" text,
	"emailVerified" timestamp,
	"image" text,
	"role" "role" DEFAULT 'member' NOT NULL,
	"createdAt" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "user_email_unique" UNIQUE("email")
);
--> statement-breakpoint
CREATE TABLE "verificationToken" (
	"identifier" text NOT NULL,
	"token" text NOT NULL,
	"expires" timestamp NOT NULL,
	CONSTRAINT "verificationToken_identifier_token_pk" PRIMARY KEY("identifier","token")
);
--> statement-breakpoint
CREATE TABLE "watch" (
	"id" serial PRIMARY KEY NOT NULL,
	"user_id" text NOT NULL,
	"converter_id" integer,
	"min_band" "band",
	"max_price_minor" bigint,
	"price_currency" char(3),
	"region" "region",
	"needs_audio" boolean DEFAULT false NOT NULL,
	"shop_ids" integer[],
	"also_price_drops" boolean DEFAULT false NOT NULL,
	"paused" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "watch_price_currency" CHECK ("watch"."max_price_minor" is null or "watch"."price_currency" is not null)
);
--> statement-breakpoint
ALTER TABLE "account" ADD CONSTRAINT "account_userId_user_id_fk" FOREIGN KEY ("userId") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_outbox" ADD CONSTRAINT "alert_outbox_watch_id_watch_id_fk" FOREIGN KEY ("watch_id") REFERENCES "public"."watch"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_outbox" ADD CONSTRAINT "alert_outbox_stock_event_id_stock_event_id_fk" FOREIGN KEY ("stock_event_id") REFERENCES "public"."stock_event"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alert_outbox" ADD CONSTRAINT "alert_outbox_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "audit_log" ADD CONSTRAINT "audit_log_actor_id_user_id_fk" FOREIGN KEY ("actor_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_reading" ADD CONSTRAINT "bench_reading_bench_run_id_bench_run_id_fk" FOREIGN KEY ("bench_run_id") REFERENCES "public"."bench_run"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_run" ADD CONSTRAINT "bench_run_revision_id_revision_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."revision"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_run" ADD CONSTRAINT "bench_run_submitted_by_id_user_id_fk" FOREIGN KEY ("submitted_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_run" ADD CONSTRAINT "bench_run_trace_file_id_file_id_fk" FOREIGN KEY ("trace_file_id") REFERENCES "public"."file"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_run" ADD CONSTRAINT "bench_run_superseded_by_id_bench_run_id_fk" FOREIGN KEY ("superseded_by_id") REFERENCES "public"."bench_run"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bench_run" ADD CONSTRAINT "bench_run_reviewed_by_id_user_id_fk" FOREIGN KEY ("reviewed_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "file" ADD CONSTRAINT "file_owner_id_user_id_fk" FOREIGN KEY ("owner_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "file" ADD CONSTRAINT "file_thumbnail_id_file_id_fk" FOREIGN KEY ("thumbnail_id") REFERENCES "public"."file"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "guide_pick" ADD CONSTRAINT "guide_pick_guide_id_guide_id_fk" FOREIGN KEY ("guide_id") REFERENCES "public"."guide"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "guide_pick" ADD CONSTRAINT "guide_pick_converter_id_converter_id_fk" FOREIGN KEY ("converter_id") REFERENCES "public"."converter"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "guide" ADD CONSTRAINT "guide_author_id_user_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "listing_state" ADD CONSTRAINT "listing_state_listing_id_listing_id_fk" FOREIGN KEY ("listing_id") REFERENCES "public"."listing"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "listing" ADD CONSTRAINT "listing_shop_id_shop_id_fk" FOREIGN KEY ("shop_id") REFERENCES "public"."shop"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "listing" ADD CONSTRAINT "listing_converter_id_converter_id_fk" FOREIGN KEY ("converter_id") REFERENCES "public"."converter"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "member_pref" ADD CONSTRAINT "member_pref_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "observation" ADD CONSTRAINT "observation_listing_id_listing_id_fk" FOREIGN KEY ("listing_id") REFERENCES "public"."listing"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "poll_count" ADD CONSTRAINT "poll_count_shop_id_shop_id_fk" FOREIGN KEY ("shop_id") REFERENCES "public"."shop"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "revision" ADD CONSTRAINT "revision_converter_id_converter_id_fk" FOREIGN KEY ("converter_id") REFERENCES "public"."converter"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "revision" ADD CONSTRAINT "revision_chip_id_chip_id_fk" FOREIGN KEY ("chip_id") REFERENCES "public"."chip"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "session" ADD CONSTRAINT "session_userId_user_id_fk" FOREIGN KEY ("userId") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stock_event" ADD CONSTRAINT "stock_event_listing_id_listing_id_fk" FOREIGN KEY ("listing_id") REFERENCES "public"."listing"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stock_event" ADD CONSTRAINT "stock_event_observation_id_observation_id_fk" FOREIGN KEY ("observation_id") REFERENCES "public"."observation"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "teardown_report" ADD CONSTRAINT "teardown_report_converter_id_converter_id_fk" FOREIGN KEY ("converter_id") REFERENCES "public"."converter"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "teardown_report" ADD CONSTRAINT "teardown_report_revision_id_revision_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."revision"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "teardown_report" ADD CONSTRAINT "teardown_report_shop_id_shop_id_fk" FOREIGN KEY ("shop_id") REFERENCES "public"."shop"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "teardown_report" ADD CONSTRAINT "teardown_report_chip_id_chip_id_fk" FOREIGN KEY ("chip_id") REFERENCES "public"."chip"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "teardown_report" ADD CONSTRAINT "teardown_report_photo_file_id_file_id_fk" FOREIGN KEY ("photo_file_id") REFERENCES "public"."file"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "teardown_report" ADD CONSTRAINT "teardown_report_submitted_by_id_user_id_fk" FOREIGN KEY ("submitted_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "teardown_report" ADD CONSTRAINT "teardown_report_reviewed_by_id_user_id_fk" FOREIGN KEY ("reviewed_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "watch" ADD CONSTRAINT "watch_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "watch" ADD CONSTRAINT "watch_converter_id_converter_id_fk" FOREIGN KEY ("converter_id") REFERENCES "public"."converter"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "alert_outbox_watch_event_uq" ON "alert_outbox" USING btree ("watch_id","stock_event_id");--> statement-breakpoint
CREATE INDEX "alert_outbox_due_idx" ON "alert_outbox" USING btree ("status","next_attempt_at");--> statement-breakpoint
CREATE INDEX "alert_outbox_user_idx" ON "alert_outbox" USING btree ("user_id");--> statement-breakpoint
CREATE INDEX "audit_entity_idx" ON "audit_log" USING btree ("entity","entity_id");--> statement-breakpoint
CREATE INDEX "audit_actor_idx" ON "audit_log" USING btree ("actor_id");--> statement-breakpoint
CREATE INDEX "audit_time_idx" ON "audit_log" USING btree ("at");--> statement-breakpoint
CREATE INDEX "bench_run_revision_status_idx" ON "bench_run" USING btree ("revision_id","status");--> statement-breakpoint
CREATE INDEX "bench_run_status_idx" ON "bench_run" USING btree ("status");--> statement-breakpoint
CREATE UNIQUE INDEX "converter_brand_model_uq" ON "converter" USING btree ("brand","model");--> statement-breakpoint
CREATE INDEX "file_owner_idx" ON "file" USING btree ("owner_id");--> statement-breakpoint
CREATE INDEX "listing_state_due_idx" ON "listing_state" USING btree ("next_poll_at");--> statement-breakpoint
CREATE UNIQUE INDEX "listing_url_uq" ON "listing" USING btree ("url");--> statement-breakpoint
CREATE INDEX "listing_converter_idx" ON "listing" USING btree ("converter_id");--> statement-breakpoint
CREATE INDEX "listing_shop_idx" ON "listing" USING btree ("shop_id");--> statement-breakpoint
CREATE INDEX "observation_listing_time_idx" ON "observation" USING btree ("listing_id","observed_at");--> statement-breakpoint
CREATE UNIQUE INDEX "revision_converter_code_uq" ON "revision" USING btree ("converter_id","code");--> statement-breakpoint
CREATE INDEX "revision_chip_idx" ON "revision" USING btree ("chip_id");--> statement-breakpoint
CREATE INDEX "revision_band_idx" ON "revision" USING btree ("band");--> statement-breakpoint
CREATE INDEX "session_user_idx" ON "session" USING btree ("userId");--> statement-breakpoint
CREATE UNIQUE INDEX "stock_event_observation_kind_uq" ON "stock_event" USING btree ("observation_id","kind");--> statement-breakpoint
CREATE INDEX "stock_event_kind_time_idx" ON "stock_event" USING btree ("kind","at");--> statement-breakpoint
CREATE INDEX "stock_event_listing_time_idx" ON "stock_event" USING btree ("listing_id","at");--> statement-breakpoint
CREATE INDEX "teardown_converter_status_idx" ON "teardown_report" USING btree ("converter_id","status");--> statement-breakpoint
CREATE INDEX "teardown_status_idx" ON "teardown_report" USING btree ("status");--> statement-breakpoint
CREATE INDEX "watch_user_idx" ON "watch" USING btree ("user_id");--> statement-breakpoint
CREATE INDEX "watch_converter_idx" ON "watch" USING btree ("converter_id");