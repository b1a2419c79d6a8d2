/**
 * Watches and expected grades: a revision nobody has measured yet carries an expected band;
 * a band-limited watch matches on it only when its owner chose "include expected grades",
 * and the e-mail calls the grade expected.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import * as t from '../../src/lib/server/db/schema';
import { createAlertHook } from '../../src/lib/server/alerts/match';
import { renderAlertMessage } from '../../src/lib/server/alerts/message';
import { loadOutboxContexts } from '../../src/lib/server/alerts/view';
import { loadRates } from '../../src/lib/server/queries/offers';
import { regradeRevision } from '../../src/lib/server/grading';
import {
	BASE_URL,
	converterId,
	createMember,
	hours,
	listingId,
	outboxRows,
	scriptChange,
	seededDatabase
} from './alerts-support';

let env: Awaited<ReturnType<typeof seededDatabase>>;
const hook = createAlertHook({ quietHours: 12 });

beforeAll(async () => {
	env = await seededDatabase('sg_it_alerts_expected');
});
afterAll(async () => env?.close());

describe('a restock of a converter whose revision is not yet measured', () => {
	let measuredOnly: string;
	let withExpected: string;
	let expectedBand: t.Band;

	beforeAll(async () => {
		const { db } = env;
		const beam = await converterId(db, 'vantacove-beam-bridge');
		// Its only revision's runs stop counting: no measured grade, its chip is graded elsewhere.
		const [rev] = await db.select().from(t.revisions).where(eq(t.revisions.converterId, beam));
		await db.update(t.benchRuns).set({ status: 'superseded' }).where(eq(t.benchRuns.revisionId, rev.id));
		await regradeRevision(db, rev.id);
		const [after] = await db.select().from(t.revisions).where(eq(t.revisions.id, rev.id));
		expect(after.band).toBeNull();
		expect(after.expectedBand).not.toBeNull();
		expectedBand = after.expectedBand!;
		measuredOnly = await createMember(db, 'measured-only@example.test');
		withExpected = await createMember(db, 'with-expected@example.test');
		await db.insert(t.watches).values([
			{ userId: measuredOnly, converterId: beam, minBand: expectedBand },
			{ userId: withExpected, converterId: beam, minBand: expectedBand, includeExpected: true }
		]);
	});

	it('matches only the watch that chose expected grades, and the e-mail says the grade is expected', async () => {
		const listing = await listingId(env.db, 'northbay-circuits', 'vantacove-beam-bridge');
		const ev = await scriptChange(env.db, hook, {
			listingId: listing,
			stock: 'in_stock',
			priceMinor: 2399,
			at: new Date(Date.now() + hours(1))
		});
		expect(ev?.kind).toBe('restock');
		const rows = await outboxRows(env.db);
		expect(rows.map((r) => r.userId)).toEqual([withExpected]);
		const [ctx] = await loadOutboxContexts(env.db, [rows[0].id], { baseUrl: BASE_URL, rates: await loadRates(env.db) });
		expect(ctx.view.band).toBeNull();
		expect(ctx.view.expected?.band).toBe(expectedBand);
		const msg = renderAlertMessage(ctx.view, {
			manageUrl: `${BASE_URL}/account/watches`,
			unsubscribeUrl: `${BASE_URL}/unsubscribe/x`
		});
		expect(msg.text).toMatch(/Level grade: +Not graded yet/);
		expect(msg.text).toMatch(
			/Expected grade: Expected: \w+, revision A \(not yet measured; from \d+ runs of this chip in \d+ other converters?\)/
		);
		expect(msg.html).toContain('Expected grade');
		expect(msg.html).toContain('not yet measured');
	});
});
