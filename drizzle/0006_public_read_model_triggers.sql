-- The public read model's bookkeeping (src/lib/server/queries/read-model.ts).
-- Statement-level triggers with transition tables put every converter whose card inputs changed
-- into card_dirty, whoever wrote (poller, curator, admin, seed), and NOTIFY sg_public so every
-- app instance drops its cached pages when the writing transaction commits. The upsert takes the
-- dirty row's lock, so two writers of one converter queue and the later rebuild sees both changes.

-- Name order as String.localeCompare (ICU root collation), whatever the cluster's locale.
CREATE INDEX "converter_card_name_idx" ON "converter_card" ("region", "brand" COLLATE "und-x-icu", "model" COLLATE "und-x-icu");
--> statement-breakpoint
CREATE FUNCTION sg_mark_cards(ids integer[]) RETURNS void LANGUAGE plpgsql AS $$
BEGIN
	INSERT INTO card_dirty (converter_id)
	SELECT DISTINCT x FROM unnest(ids) AS x WHERE x IS NOT NULL ORDER BY x
	ON CONFLICT (converter_id) DO UPDATE SET converter_id = excluded.converter_id;
	PERFORM pg_notify('sg_public', 'cards');
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_notify_public() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM pg_notify('sg_public', TG_TABLE_NAME);
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_cards_new_id() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT id FROM new_rows));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_cards_new_converter() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT converter_id FROM new_rows));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_cards_old_converter() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT converter_id FROM old_rows));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_cards_moved_converter() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT converter_id FROM new_rows UNION SELECT converter_id FROM old_rows));
	RETURN NULL;
END $$;
--> statement-breakpoint
-- A listing's state: only a change of price, currency or stock counts ("last checked" moves on every poll).
CREATE FUNCTION sg_cards_listing_state_new() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT l.converter_id FROM new_rows n JOIN listing l ON l.id = n.listing_id));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_cards_listing_state_changed() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
	ids integer[];
BEGIN
	ids := ARRAY(
		SELECT l.converter_id FROM new_rows n
		JOIN old_rows o ON o.listing_id = n.listing_id
		JOIN listing l ON l.id = n.listing_id
		WHERE (n.current_price_minor, n.current_currency, n.current_stock) IS DISTINCT FROM (o.current_price_minor, o.current_currency, o.current_stock)
	);
	IF cardinality(ids) > 0 THEN
		PERFORM sg_mark_cards(ids);
	END IF;
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_cards_chip_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT r.converter_id FROM new_rows n JOIN revision r ON r.chip_id = n.id));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE FUNCTION sg_cards_shop_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT l.converter_id FROM new_rows n JOIN listing l ON l.shop_id = n.id));
	RETURN NULL;
END $$;
--> statement-breakpoint
-- A new exchange rate can change which offer is cheapest anywhere: every card.
CREATE FUNCTION sg_cards_all() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	PERFORM sg_mark_cards(ARRAY(SELECT id FROM converter WHERE retired_at IS NULL));
	RETURN NULL;
END $$;
--> statement-breakpoint
CREATE TRIGGER sg_cards_converter_ins AFTER INSERT ON converter REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_new_id();
--> statement-breakpoint
CREATE TRIGGER sg_cards_converter_upd AFTER UPDATE ON converter REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_new_id();
--> statement-breakpoint
CREATE TRIGGER sg_cards_converter_del AFTER DELETE ON converter FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_cards_revision_ins AFTER INSERT ON revision REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_new_converter();
--> statement-breakpoint
CREATE TRIGGER sg_cards_revision_upd AFTER UPDATE ON revision REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_moved_converter();
--> statement-breakpoint
CREATE TRIGGER sg_cards_revision_del AFTER DELETE ON revision REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_old_converter();
--> statement-breakpoint
CREATE TRIGGER sg_cards_chip_upd AFTER UPDATE ON chip REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_chip_changed();
--> statement-breakpoint
CREATE TRIGGER sg_cards_listing_ins AFTER INSERT ON listing REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_new_converter();
--> statement-breakpoint
CREATE TRIGGER sg_cards_listing_upd AFTER UPDATE ON listing REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_moved_converter();
--> statement-breakpoint
CREATE TRIGGER sg_cards_listing_del AFTER DELETE ON listing REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_old_converter();
--> statement-breakpoint
CREATE TRIGGER sg_cards_listing_state_ins AFTER INSERT ON listing_state REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_listing_state_new();
--> statement-breakpoint
CREATE TRIGGER sg_cards_listing_state_upd AFTER UPDATE ON listing_state REFERENCING NEW TABLE AS new_rows OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_listing_state_changed();
--> statement-breakpoint
CREATE TRIGGER sg_cards_shop_upd AFTER UPDATE ON shop REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_shop_changed();
--> statement-breakpoint
CREATE TRIGGER sg_cards_rate_change AFTER INSERT OR UPDATE OR DELETE ON exchange_rate FOR EACH STATEMENT EXECUTE FUNCTION sg_cards_all();
--> statement-breakpoint
-- Tables that public pages show but cards do not hold: only the cached pages must go.
CREATE TRIGGER sg_public_bench_run AFTER INSERT OR UPDATE OR DELETE ON bench_run FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_teardown AFTER INSERT OR UPDATE OR DELETE ON teardown_report FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_guide AFTER INSERT OR UPDATE OR DELETE ON guide FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_guide_pick AFTER INSERT OR UPDATE OR DELETE ON guide_pick FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_observation AFTER INSERT OR UPDATE OR DELETE ON observation FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_stock_event AFTER INSERT OR UPDATE OR DELETE ON stock_event FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_file AFTER UPDATE OR DELETE ON file FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_chip_ins AFTER INSERT ON chip FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
CREATE TRIGGER sg_public_shop_ins AFTER INSERT ON shop FOR EACH STATEMENT EXECUTE FUNCTION sg_notify_public();
--> statement-breakpoint
-- Cards for what is already there: the first read rebuilds them.
INSERT INTO card_dirty (converter_id) SELECT id FROM converter ON CONFLICT DO NOTHING;
