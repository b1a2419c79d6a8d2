import { redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { pendingRuns, reviewBenchRun } from '$lib/server/curate/bench';
import { catalogueOptions } from '$lib/server/curate/catalogue';
import { attempt, emptyForm, invalid, validate } from '$lib/server/curate/forms';
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
	// One form per item, told apart by id (`flag-<run id>`, `teardown-<report id>`,
	// `run-<run id>`), so an answer lands on the item it was about.
	const [flagForms, teardownForms, runForms] = await Promise.all([
		Promise.all(flags.map((f) => emptyForm(flagDecisionSchema, { id: f.runId, note: '' }, `flag-${f.runId}`))),
		Promise.all(teardowns.map((r) => emptyForm(teardownReviewSchema, { id: r.id, reason: '' }, `teardown-${r.id}`))),
		Promise.all(runs.map((r) => emptyForm(reviewSchema, { id: r.id, reason: '' }, `run-${r.id}`)))
	]);
	return {
		teardowns: teardowns.map((r, i) => ({ ...r, form: teardownForms[i] })),
		runs: runs.map((r, i) => ({ ...r, form: runForms[i] })),
		flags: flags.map((f, i) => ({ ...f, form: flagForms[i] })),
		revisions: options.revisions,
		chips: options.chips
	};
};

export const actions: Actions = {
	teardown: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, teardownReviewSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => reviewTeardown(db, user, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/review?done=teardown-${form.data.decision}`);
	},
	run: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, reviewSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => reviewBenchRun(db, user, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/review?done=run-${form.data.decision}`);
	},
	flag: async (event) => {
		const user = requireRole(event, 'curator');
		const form = await validate(event.request, flagDecisionSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => decideFlag(db, user, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/review?done=flag-${form.data.decision}`);
	}
};
