CREATE TYPE "public"."check_state" AS ENUM('open', 'kept', 'superseded', 'remeasure');--> statement-breakpoint
CREATE TYPE "public"."grade_kind" AS ENUM('measured', 'expected');--> statement-breakpoint
CREATE TYPE "public"."z_signal" AS ENUM('satisfactory', 'questionable', 'action');--> statement-breakpoint
CREATE TABLE "grade_history" (
	"id" serial PRIMARY KEY NOT NULL,
	"revision_id" integer NOT NULL,
	"kind" "grade_kind" NOT NULL,
	"band" "band",
	"detail" text DEFAULT '' NOT NULL,
	"at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "run_check" (
	"bench_run_id" integer PRIMARY KEY NOT NULL,
	"signal" "z_signal" NOT NULL,
	"worst_z" double precision NOT NULL,
	"reason" text NOT NULL,
	"cells" jsonb NOT NULL,
	"testers" integer NOT NULL,
	"computed_at" timestamp with time zone NOT NULL,
	"state" "check_state",
	"note" text,
	"reviewed_by_id" text,
	"reviewed_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "stat_snapshot" (
	"name" text PRIMARY KEY NOT NULL,
	"value" jsonb NOT NULL,
	"computed_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
ALTER TABLE "revision" ADD COLUMN "expected_band" "band";--> statement-breakpoint
ALTER TABLE "revision" ADD COLUMN "expected_basis" text;--> statement-breakpoint
ALTER TABLE "revision" ADD COLUMN "expected_runs" integer;--> statement-breakpoint
ALTER TABLE "revision" ADD COLUMN "expected_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "watch" ADD COLUMN "include_expected" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "grade_history" ADD CONSTRAINT "grade_history_revision_id_revision_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."revision"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_check" ADD CONSTRAINT "run_check_bench_run_id_bench_run_id_fk" FOREIGN KEY ("bench_run_id") REFERENCES "public"."bench_run"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_check" ADD CONSTRAINT "run_check_reviewed_by_id_user_id_fk" FOREIGN KEY ("reviewed_by_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "grade_history_revision_idx" ON "grade_history" USING btree ("revision_id","at");--> statement-breakpoint
CREATE INDEX "run_check_state_idx" ON "run_check" USING btree ("state");