-- A converter's revision panels are kept as the one HTML text its page shows, with the converter
-- name they show beside them: a read gets a string, where the JSON list made every page parse and
-- join some 45 kB. Panels stored before are dropped; the first page that shows them renders them again.
ALTER TABLE "converter_detail" DROP COLUMN "revisions_html";--> statement-breakpoint
ALTER TABLE "converter_detail" ADD COLUMN "revisions_html" text;--> statement-breakpoint
ALTER TABLE "converter_detail" ADD COLUMN "revisions_name" text;--> statement-breakpoint
UPDATE "converter_detail" SET "html_build" = NULL;
