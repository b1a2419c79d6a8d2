import { error, redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { runsOfRevision, supersedeBenchRun } from '$lib/server/curate/bench';
import { gradeHistory } from '$lib/server/grading';
import { checksOfRuns } from '$lib/server/consistency';
import { gradeHistoryOf } from '$lib/server/expected';
import { getRevision, listChips, setRevisionRetired, updateRevision } from '$lib/server/curate/catalogue';
import { attempt, emptyForm, idParam, invalid, validate, orHttpError } from '$lib/server/curate/forms';
import { revisionSchema, supersedeSchema } from '$lib/server/curate/schemas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'curator');
	const id = idParam(event.params.id);
	const found = await getRevision(db, id);
	if (!found) error(404, 'No such revision.');
	const { revision } = found;
	const [runs, chips, history, grades] = await Promise.all([
		runsOfRevision(db, id),
		listChips(db),
		gradeHistory(db, id),
		gradeHistoryOf(db, [id])
	]);
	const checks = await checksOfRuns(
		db,
		runs.map((r) => r.id)
	);
	// One supersede form per run that still counts or waits, told apart by id
	// (`supersede-<run id>`) so an answer lands on the run it was about.
	const supersedeForms = await Promise.all(
		runs.map((r) =>
			r.status === 'accepted' || r.status === 'pending'
				? emptyForm(supersedeSchema, { id: r.id, reason: '' }, `supersede-${r.id}`)
				: null
		)
	);
	return {
		...found,
		runs: runs.map((r, i) => ({ ...r, check: checks.get(r.id) ?? null, supersedeForm: supersedeForms[i] })),
		/** Measured and expected bands over time (grade_history). */
		grades,
		history,
		chips: chips.map((c) => ({ value: c.id, label: `${c.name} (${c.maker})${c.retiredAt ? ', retired' : ''}` })),
		form: await emptyForm(revisionSchema, {
			converterId: revision.converterId,
			code: revision.code,
			chipId: revision.chipId,
			boardMarking: revision.boardMarking,
			seenFrom: revision.seenFrom ?? '',
			seenTo: revision.seenTo ?? '',
			notes: revision.notes
		})
	};
};

export const actions: Actions = {
	update: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const form = await validate(event.request, revisionSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => updateRevision(db, user, id, form.data));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/revisions/${id}`);
	},
	supersede: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		const form = await validate(event.request, supersedeSchema);
		if (!form.valid) return invalid(form);
		const res = await attempt(form, () => supersedeBenchRun(db, user, form.data, new Date(), id));
		if (!res.ok) return res.failure;
		redirect(303, `/curate/revisions/${id}`);
	},
	retire: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		await orHttpError(() => setRevisionRetired(db, user, id, true));
		redirect(303, `/curate/revisions/${id}`);
	},
	restore: async (event) => {
		const user = requireRole(event, 'curator');
		const id = idParam(event.params.id);
		await orHttpError(() => setRevisionRetired(db, user, id, false));
		redirect(303, `/curate/revisions/${id}`);
	}
};
