/**
 * A curator's decision on a bench run the tester check flagged (|z| >= 3 against the
 * revision's consensus): keep it as it is, supersede it (it stops counting), or ask the
 * tester to measure again (the note shows on their account page). Audited.
 */
import { eq } from 'drizzle-orm';
import type { z } from 'zod';
import { audit } from '../audit';
import * as t from '../db/schema';
import { supersedeBenchRun } from './bench';
import { FieldError, type Actor, type Database } from './common';
import type { flagDecisionSchema } from './schemas';

const STATE: Record<z.infer<typeof flagDecisionSchema>['decision'], t.CheckState> = {
	keep: 'kept',
	supersede: 'superseded',
	remeasure: 'remeasure'
};

export async function decideFlag(
	db: Database,
	actor: Actor,
	input: z.infer<typeof flagDecisionSchema>,
	now = new Date()
) {
	return db.transaction(async (tx) => {
		const [before] = await tx.select().from(t.runChecks).where(eq(t.runChecks.benchRunId, input.id)).for('update');
		if (!before) throw new FieldError(null, 'That run has no tester check.', 404);
		if (before.state !== 'open')
			throw new FieldError(
				null,
				before.state ? `This flag was already decided (${before.state}).` : 'This run is not flagged.',
				409
			);
		const state = STATE[input.decision];
		// the state goes first: superseding recomputes the checks, and a decided flag is kept
		const [row] = await tx
			.update(t.runChecks)
			.set({ state, note: input.note, reviewedById: actor.id, reviewedAt: now })
			.where(eq(t.runChecks.benchRunId, input.id))
			.returning();
		if (input.decision === 'supersede')
			await supersedeBenchRun(
				tx as unknown as Database,
				actor,
				{ id: input.id, reason: `Tester check: ${input.note}` },
				now
			);
		await audit(tx, {
			actorId: actor.id,
			action: `flag-${input.decision}`,
			entity: 'bench_run',
			entityId: input.id,
			before: { state: before.state, signal: before.signal, worstZ: before.worstZ, reason: before.reason },
			after: { state: row.state, note: row.note },
			reason: input.note
		});
		return row;
	});
}
