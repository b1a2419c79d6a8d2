/** Counts behind the curator workspace landing. */
import { sql } from 'drizzle-orm';
import type { Database } from '../db/client';

export async function curatorSummary(db: Database) {
	const [row] = await db.execute<{
		pending_runs: number;
		pending_teardowns: number;
		listings: number;
		failing_listings: number;
	}>(sql`
		select
			(select count(*)::int from bench_run where status = 'pending') as pending_runs,
			(select count(*)::int from teardown_report where status = 'pending') as pending_teardowns,
			(select count(*)::int from listing where active) as listings,
			(select count(*)::int from listing_state where consecutive_failures > 0) as failing_listings
	`);
	return {
		pendingRuns: row.pending_runs,
		pendingTeardowns: row.pending_teardowns,
		listings: row.listings,
		failingListings: row.failing_listings
	};
}
