CREATE TABLE "converter_detail" (
	"converter_id" integer PRIMARY KEY NOT NULL,
	"doc" json NOT NULL,
	"snapshot" "pg_snapshot" NOT NULL,
	"built_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "detail_stale" (
	"converter_id" integer NOT NULL,
	"xid" "xid8" DEFAULT pg_current_xact_id() NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "detail_stale_converter_id_xid_pk" PRIMARY KEY("converter_id","xid")
);
--> statement-breakpoint
ALTER TABLE "converter_detail" ADD CONSTRAINT "converter_detail_converter_id_converter_id_fk" FOREIGN KEY ("converter_id") REFERENCES "public"."converter"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- The converter page's read model (src/lib/server/queries/converter-doc.ts). Every write to one of
-- its inputs leaves a mark (converter, writing transaction) in detail_stale, from the writing
-- transaction itself. A document is stale while a mark exists that the snapshot it was built from
-- does not see. Plain inserts, one per converter and transaction: writers never wait for each
-- other or for a reader, whatever order they write in.
CREATE FUNCTION sg_detail_stale(ids integer[]) RETURNS void LANGUAGE plpgsql AS $$
BEGIN
	INSERT INTO detail_stale (converter_id)
	SELECT DISTINCT x FROM unnest(ids) AS x WHERE x IS NOT NULL
	ON CONFLICT DO NOTHING;
END $$;
--> statement-breakpoint
-- Whatever changes a card (converter, revision, chip, listing, its price or stock, shop, rates)
-- changes the page too.
CREATE OR REPLACE FUNCTION sg_mark_cards(ids integer[]) RETURNS void LANGUAGE plpgsql AS $$
BEGIN
	INSERT INTO card_dirty (converter_id)
	SELECT DISTINCT x FROM unnest(ids) AS x WHERE x IS NOT NULL ORDER BY x
	ON CONFLICT (converter_id) DO UPDATE SET converter_id = excluded.converter_id;
	PERFORM sg_detail_stale(ids);
	PERFORM pg_notify('sg_public', 'cards');
END $$;
--> statement-breakpoint
-- Inputs only the page shows. Transition tables allow one event per trigger: each function serves
-- the INSERT, UPDATE and DELETE triggers of its tables.
CREATE FUNCTION sg_detail_by_converter() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP IN ('INSERT', 'UPDATE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT converter_id FROM new_rows));
	END IF;
	IF TG_OP IN ('UPDATE', 'DELETE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT converter_id FROM old_rows));
	END IF;
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_detail_by_revision() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP IN ('INSERT', 'UPDATE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT r.converter_id FROM new_rows n JOIN revision r ON r.id = n.revision_id));
	END IF;
	IF TG_OP IN ('UPDATE', 'DELETE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT r.converter_id FROM old_rows o JOIN revision r ON r.id = o.revision_id));
	END IF;
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_detail_by_run() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP IN ('INSERT', 'UPDATE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT r.converter_id FROM new_rows n
			JOIN bench_run b ON b.id = n.bench_run_id JOIN revision r ON r.id = b.revision_id));
	END IF;
	IF TG_OP IN ('UPDATE', 'DELETE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT r.converter_id FROM old_rows o
			JOIN bench_run b ON b.id = o.bench_run_id JOIN revision r ON r.id = b.revision_id));
	END IF;
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_detail_by_listing() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP IN ('INSERT', 'UPDATE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT l.converter_id FROM new_rows n JOIN listing l ON l.id = n.listing_id));
	END IF;
	IF TG_OP IN ('UPDATE', 'DELETE') THEN
		PERFORM sg_detail_stale(ARRAY(SELECT l.converter_id FROM old_rows o JOIN listing l ON l.id = o.listing_id));
	END IF;
	RETURN NULL;
END $$;
--> statement-breakpoint
-- A shop's record line: the jobs process rewrites every shop's row; only a new line counts.
CREATE FUNCTION sg_detail_shop_record() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP = 'INSERT' THEN
		PERFORM sg_detail_stale(ARRAY(SELECT l.converter_id FROM new_rows n JOIN listing l ON l.shop_id = n.shop_id));
	ELSE
		PERFORM sg_detail_stale(ARRAY(SELECT l.converter_id FROM new_rows n
			JOIN old_rows o ON o.shop_id = n.shop_id JOIN listing l ON l.shop_id = n.shop_id
			WHERE n.line IS DISTINCT FROM o.line));
	END IF;
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE TRIGGER sg_detail_teardown_ins AFTER INSERT ON teardown_report REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_converter();
--> statement-breakpoint
CREATE TRIGGER sg_detail_teardown_upd AFTER UPDATE ON teardown_report REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_converter();
--> statement-breakpoint
CREATE TRIGGER sg_detail_teardown_del AFTER DELETE ON teardown_report REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_converter();
--> statement-breakpoint
CREATE TRIGGER sg_detail_bench_run_ins AFTER INSERT ON bench_run REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_revision();
--> statement-breakpoint
CREATE TRIGGER sg_detail_bench_run_upd AFTER UPDATE ON bench_run REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_revision();
--> statement-breakpoint
CREATE TRIGGER sg_detail_bench_run_del AFTER DELETE ON bench_run REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_revision();
--> statement-breakpoint
CREATE TRIGGER sg_detail_grade_history_ins AFTER INSERT ON grade_history REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_revision();
--> statement-breakpoint
CREATE TRIGGER sg_detail_grade_history_upd AFTER UPDATE ON grade_history REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_revision();
--> statement-breakpoint
CREATE TRIGGER sg_detail_grade_history_del AFTER DELETE ON grade_history REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_revision();
--> statement-breakpoint
CREATE TRIGGER sg_detail_bench_reading_ins AFTER INSERT ON bench_reading REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_run();
--> statement-breakpoint
CREATE TRIGGER sg_detail_bench_reading_upd AFTER UPDATE ON bench_reading REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_run();
--> statement-breakpoint
CREATE TRIGGER sg_detail_bench_reading_del AFTER DELETE ON bench_reading REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_run();
--> statement-breakpoint
CREATE TRIGGER sg_detail_observation_ins AFTER INSERT ON observation REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_listing();
--> statement-breakpoint
CREATE TRIGGER sg_detail_observation_upd AFTER UPDATE ON observation REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_listing();
--> statement-breakpoint
CREATE TRIGGER sg_detail_observation_del AFTER DELETE ON observation REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_listing();
--> statement-breakpoint
CREATE TRIGGER sg_detail_stock_event_ins AFTER INSERT ON stock_event REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_listing();
--> statement-breakpoint
CREATE TRIGGER sg_detail_stock_event_upd AFTER UPDATE ON stock_event REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_listing();
--> statement-breakpoint
CREATE TRIGGER sg_detail_stock_event_del AFTER DELETE ON stock_event REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_by_listing();
--> statement-breakpoint
CREATE TRIGGER sg_detail_shop_record_ins AFTER INSERT ON shop_record REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_shop_record();
--> statement-breakpoint
CREATE TRIGGER sg_detail_shop_record_upd AFTER UPDATE ON shop_record REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_detail_shop_record();
