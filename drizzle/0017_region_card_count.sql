-- How many cards each region has, so an unfiltered catalogue page reads its count instead of
-- counting the region's cards on every request. Statement triggers move it in the transaction that
-- adds or removes cards (card rebuilds, and deletes cascading from converter), so a reader sees the
-- count that matches the cards of its own snapshot. Written to run again safely: a second run
-- counts the cards afresh.
CREATE TABLE IF NOT EXISTS "region_card_count" (
	"region" "region" PRIMARY KEY NOT NULL,
	"cards" integer NOT NULL
);--> statement-breakpoint
-- No card is written between the count below and the triggers taking over.
LOCK TABLE "converter_card" IN SHARE ROW EXCLUSIVE MODE;--> statement-breakpoint
-- The counter rows are taken in region order, so two writers adding cards in several regions wait
-- for each other in turn and never in a cycle.
CREATE OR REPLACE FUNCTION "region_card_count_move"() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	INSERT INTO "region_card_count" AS c ("region", "cards")
		SELECT "region", CASE TG_OP WHEN 'INSERT' THEN count(*)::int ELSE -count(*)::int END
		FROM "changed_cards" GROUP BY "region" ORDER BY "region"
	ON CONFLICT ("region") DO UPDATE SET "cards" = c."cards" + excluded."cards";
	RETURN NULL;
END $$;--> statement-breakpoint
CREATE OR REPLACE FUNCTION "region_card_count_clear"() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	UPDATE "region_card_count" SET "cards" = 0;
	RETURN NULL;
END $$;--> statement-breakpoint
-- A card's region is part of its key and never changes; refusing it keeps the counts exact without
-- a trigger on every card update.
CREATE OR REPLACE FUNCTION "converter_card_region_fixed"() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	RAISE EXCEPTION 'a card''s region cannot change (converter %: % to %)', OLD."converter_id", OLD."region", NEW."region";
END $$;--> statement-breakpoint
CREATE OR REPLACE TRIGGER "converter_card_count_insert" AFTER INSERT ON "converter_card"
	REFERENCING NEW TABLE AS "changed_cards" FOR EACH STATEMENT EXECUTE FUNCTION "region_card_count_move"();--> statement-breakpoint
CREATE OR REPLACE TRIGGER "converter_card_count_delete" AFTER DELETE ON "converter_card"
	REFERENCING OLD TABLE AS "changed_cards" FOR EACH STATEMENT EXECUTE FUNCTION "region_card_count_move"();--> statement-breakpoint
CREATE OR REPLACE TRIGGER "converter_card_count_truncate" AFTER TRUNCATE ON "converter_card"
	FOR EACH STATEMENT EXECUTE FUNCTION "region_card_count_clear"();--> statement-breakpoint
CREATE OR REPLACE TRIGGER "converter_card_region_fixed" BEFORE UPDATE OF "region" ON "converter_card"
	FOR EACH ROW WHEN (OLD."region" IS DISTINCT FROM NEW."region") EXECUTE FUNCTION "converter_card_region_fixed"();--> statement-breakpoint
INSERT INTO "region_card_count" ("region", "cards")
	SELECT r, (SELECT count(*)::int FROM "converter_card" WHERE "region" = r) FROM unnest(enum_range(NULL::"region")) AS r
ON CONFLICT ("region") DO UPDATE SET "cards" = excluded."cards";
