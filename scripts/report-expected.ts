/**
 * `npm run report:expected`: leave-one-out backtest of expected grades over the catalogue.
 * For each measured revision, predict its band from the accepted runs of its chip on the
 * other revisions, compare with the measured band, print the exact-band and within-one-band
 * rates, and store them (stat_snapshot) for the learn page.
 */
import { createDb } from '../src/lib/server/db/client';
import { runAndStoreBacktest } from '../src/lib/server/expected';

const { db, sql } = createDb(process.env.DATABASE_URL, { max: 1 });
const pct = (x: number | null) => (x === null ? 'n/a' : `${(x * 100).toFixed(1)} %`);
try {
	const res = await runAndStoreBacktest(db);
	for (const r of res.rows)
		console.log(
			`revision ${r.revisionId}: measured ${r.measured}, expected ${r.expected}, ${r.distance} band(s) apart`
		);
	console.log(`predicted=${res.predicted} skipped=${res.skipped} (no runs of the chip elsewhere)`);
	console.log(`exact_band_rate=${res.exactRate ?? 'n/a'} within_one_band_rate=${res.withinOneRate ?? 'n/a'}`);
	console.log(
		`Expected band equals the measured one ${pct(res.exactRate)} of the time, within one band ${pct(res.withinOneRate)} (stored for /learn).`
	);
} finally {
	await sql.end();
}
