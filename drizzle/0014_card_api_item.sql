-- Each card also keeps its /api/v1/converters item as JSON text (read-model.ts, apiItemText) and its
-- best offer's listing, which reads join for the last-checked time without opening the entry.
ALTER TABLE "converter_card" ADD COLUMN "api_item" text;--> statement-breakpoint
ALTER TABLE "converter_card" ADD COLUMN "api_shape" smallint;--> statement-breakpoint
ALTER TABLE "converter_card" ADD COLUMN "best_listing_id" integer;--> statement-breakpoint
-- Cards built before have neither: the next read rebuilds them all, before it reads.
INSERT INTO card_dirty (converter_id) SELECT id FROM converter ON CONFLICT DO NOTHING;
