CREATE TABLE "card_dirty" (
	"converter_id" integer PRIMARY KEY NOT NULL
);
--> statement-breakpoint
CREATE TABLE "converter_card" (
	"region" "region" NOT NULL,
	"converter_id" integer NOT NULL,
	"slug" text NOT NULL,
	"brand" text NOT NULL,
	"model" text NOT NULL,
	"has_audio_out" boolean NOT NULL,
	"power" "power_kind" NOT NULL,
	"band_rank" smallint NOT NULL,
	"score" double precision NOT NULL,
	"best_eur" double precision,
	"buyable" smallint NOT NULL,
	"in_stock_shops" integer NOT NULL,
	"entry" jsonb NOT NULL,
	"refreshed_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "converter_card_region_converter_id_pk" PRIMARY KEY("region","converter_id")
);
--> statement-breakpoint
ALTER TABLE "converter_card" ADD CONSTRAINT "converter_card_converter_id_converter_id_fk" FOREIGN KEY ("converter_id") REFERENCES "public"."converter"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "converter_card_band_idx" ON "converter_card" USING btree ("region","band_rank","score" DESC NULLS LAST,"best_eur");--> statement-breakpoint
CREATE INDEX "converter_card_price_idx" ON "converter_card" USING btree ("region","best_eur","band_rank");--> statement-breakpoint
CREATE INDEX "converter_card_converter_idx" ON "converter_card" USING btree ("converter_id");