-- The columns every public page reads whole (a card's HTML, entry and API item; a converter's
-- document, runs and stored revision panels) are long enough for PostgreSQL to compress. It
-- compresses with pglz by default; lz4 (PostgreSQL 14 and later, when the server is built with it,
-- as Debian's and the managed services' are) decompresses several times faster, and every read
-- pays for the decompression. Values already stored keep pglz until they are written again
-- (cards and documents are rebuilt as their inputs change). A server without lz4 keeps pglz.
DO $$
BEGIN
	ALTER TABLE "converter_card"
		ALTER COLUMN "card_html" SET COMPRESSION lz4,
		ALTER COLUMN "entry" SET COMPRESSION lz4,
		ALTER COLUMN "api_item" SET COMPRESSION lz4;
	ALTER TABLE "converter_detail"
		ALTER COLUMN "doc" SET COMPRESSION lz4,
		ALTER COLUMN "runs" SET COMPRESSION lz4,
		ALTER COLUMN "revisions_html" SET COMPRESSION lz4;
EXCEPTION WHEN feature_not_supported THEN
	RAISE NOTICE 'this server has no lz4: the read model keeps pglz';
END $$;
