-- converter_card is rewritten row by row as prices, stock and grades change. Counting a region's
-- cards (every catalogue and API page does) is an index-only scan only while the table's visibility
-- map is current; with PostgreSQL's default thresholds (20 % of the rows changed) the planner fell
-- back to reading the whole table, wide with its entries: 4-5 ms per page at 2,000 converters
-- against 0.3 ms. Vacuum it after 2 % of its rows changed (a few hundred rows: a cheap vacuum).
ALTER TABLE "converter_card" SET (
	autovacuum_vacuum_scale_factor = 0.02,
	autovacuum_vacuum_insert_scale_factor = 0.02,
	autovacuum_analyze_scale_factor = 0.05
);
