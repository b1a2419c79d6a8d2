CREATE TABLE "shop_poll_state" (
	"shop_id" integer PRIMARY KEY NOT NULL,
	"paused_until" timestamp with time zone,
	"pause_reason" text,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "listing_state" ADD COLUMN "consecutive_not_found" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "shop_poll_state" ADD CONSTRAINT "shop_poll_state_shop_id_shop_id_fk" FOREIGN KEY ("shop_id") REFERENCES "public"."shop"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "listing_state_requested_idx" ON "listing_state" USING btree ("poll_requested_at") WHERE "listing_state"."poll_requested_at" is not null;