-- Each converter's document keeps its revision panels as HTML, rendered by the app the first time a
-- page shows the document (src/lib/server/rendered-html.ts), and the build that
-- rendered them. Null until then, and whenever the document is replaced.
ALTER TABLE "converter_detail" ADD COLUMN "revisions_html" json;--> statement-breakpoint
ALTER TABLE "converter_detail" ADD COLUMN "html_build" text;
