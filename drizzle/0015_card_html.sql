-- Each card keeps the catalogue's HTML for it, rendered by the app the first time a page shows the
-- card (src/lib/server/rendered-html.ts), and the build that rendered it. Null until then: no rebuild.
ALTER TABLE "converter_card" ADD COLUMN "card_html" text;--> statement-breakpoint
ALTER TABLE "converter_card" ADD COLUMN "card_html_build" text;
