import { fail, redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { pendingRuns, reviewBenchRun } from '$lib/server/curate/bench';
import { catalogueOptions } from '$lib/server/curate/catalogue';
import { attempt, validate } from '$lib/server/curate/forms';
import { flagDecisionSchema, reviewSchema, teardownReviewSchema } from '$lib/server/curate/schemas';
import { decideFlag } from '$lib/server/curate/run-checks';
import { openFlags } from '$lib/server/consistency';
import { pendingTeardowns, reviewTeardown } from '$lib/server/curate/teardowns';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const [teardowns, runs, options, flags] = await Promise.all([
		pendingTeardowns(db),
		pendingRuns(db),
		catalogueOptions(db),
		openFlags(db)
	]);
	return { teardowns, runs, flags, revisions: options.revisions, chips: options.chips };
};

function itemFailure(kind: 'teardown' | 'run' | 'flag', id: number, status: number, message: string, reason: string) {
	return fail(status, { item: { kind, id, message, reason } });
}

export const actions: Actions = {
	teardown: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, teardownReviewSchema);
		const first = Object.values(form.errors).flat()[0] as string | undefined;
		if (!form.valid) return itemFailure('teardown', form.data.id, 400, first ?? 'Check the form.', form.data.reason);
		const res = await attempt(form, () => reviewTeardown(db, user, form.data));
		if (!res.ok) {
			const m = res.failure.data.form.message as { text?: string } | undefined;
			return itemFailure(
				'teardown',
				form.data.id,
				res.failure.status,
				m?.text ?? 'Could not save the review.',
				form.data.reason
			);
		}
		redirect(303, `/curate/review?done=teardown-${form.data.decision}`);
	},
	run: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, reviewSchema);
		const first = Object.values(form.errors).flat()[0] as string | undefined;
		if (!form.valid) return itemFailure('run', form.data.id, 400, first ?? 'Check the form.', form.data.reason);
		const res = await attempt(form, () => reviewBenchRun(db, user, form.data));
		if (!res.ok) {
			const m = res.failure.data.form.message as { text?: string } | undefined;
			return itemFailure(
				'run',
				form.data.id,
				res.failure.status,
				m?.text ?? 'Could not save the review.',
				form.data.reason
			);
		}
		redirect(303, `/curate/review?done=run-${form.data.decision}`);
	},
	flag: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, flagDecisionSchema);
		const first = Object.values(form.errors).flat()[0] as string | undefined;
		if (!form.valid) return itemFailure('flag', form.data.id, 400, first ?? 'Check the form.', form.data.note);
		const res = await attempt(form, () => decideFlag(db, user, form.data));
		if (!res.ok) {
			const m = res.failure.data.form.message as { text?: string } | undefined;
			return itemFailure(
				'flag',
				form.data.id,
				res.failure.status,
				m?.text ?? 'Could not save the decision.',
				form.data.note
			);
		}
		redirect(303, `/curate/review?done=flag-${form.data.decision}`);
	}
};
