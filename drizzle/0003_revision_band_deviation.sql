ALTER TABLE "revision" ADD COLUMN "deviation_ire" double precision;--> statement-breakpoint
ALTER TABLE "revision" ADD COLUMN "band_reason" text;