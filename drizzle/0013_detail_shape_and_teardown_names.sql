ALTER TABLE "detail_stale" ALTER COLUMN "at" SET DEFAULT statement_timestamp();--> statement-breakpoint
ALTER TABLE "converter_detail" ADD COLUMN "shape" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
-- Teardown rows name their shop and chip, which need not be a shop the converter is listed at or a
-- chip its revisions use (that is what a teardown finds out): renaming either marks the converters
-- whose teardowns name it. (Migration 0012 marks on a rate change too, through sg_mark_cards; the
-- document holds no converted price, so that only costs a rebuild.)
CREATE FUNCTION sg_detail_teardown_shop() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_detail_stale(ARRAY(SELECT t.converter_id FROM new_rows n JOIN teardown_report t ON t.shop_id = n.id));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_detail_teardown_chip() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_detail_stale(ARRAY(SELECT t.converter_id FROM new_rows n JOIN teardown_report t ON t.chip_id = n.id));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE TRIGGER sg_detail_teardown_shop_upd AFTER UPDATE ON shop REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_teardown_shop();
--> statement-breakpoint
CREATE TRIGGER sg_detail_teardown_chip_upd AFTER UPDATE ON chip REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_teardown_chip();
--> statement-breakpoint
-- Stock events are not read by the document (outlooks come from observations): no marks for them.
DROP TRIGGER sg_detail_stock_event_ins ON stock_event;
--> statement-breakpoint
DROP TRIGGER sg_detail_stock_event_upd ON stock_event;
--> statement-breakpoint
DROP TRIGGER sg_detail_stock_event_del ON stock_event;
