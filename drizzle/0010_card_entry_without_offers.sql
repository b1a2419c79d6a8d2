-- A card's entry no longer carries the region's whole offer list: no page or API response showed
-- it (they show the best offer), yet every read sent it and parsed it. New cards are built without
-- it (buildEntries); this strips it from the cards already stored.
UPDATE "converter_card" SET "entry" = "entry" - 'offers' WHERE "entry" ? 'offers';
