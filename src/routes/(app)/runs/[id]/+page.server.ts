import { error, fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { isDomainError } from '$lib/domain-error';
import { batchRepairFormSchema } from '$lib/forms';
import { countCleared } from '$lib/server/dataset-export';
import { formFailure } from '$lib/server/errors';
import { countBatchHeld, projectRecipes, repairBatch } from '$lib/server/repairs';
import { loadRunForUser, runSummary } from '$lib/server/runs';
import { parseRunFilter, rulePassRates, runRows, runView } from '$lib/server/run-view';
import type { SessionUser } from '$lib/server/auth';
import type { Actions, PageServerLoad } from './$types';

async function runOr404(me: SessionUser, id: string) {
	if (!/^\d{1,10}$/.test(id)) error(404, `No run "${id.slice(0, 40)}".`);
	try {
		return await loadRunForUser(getDb(), me, Number(id));
	} catch (e) {
		if (isDomainError(e, 'not-found')) error(404, e.message);
		throw e;
	}
}

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const me = requireRole(locals);
	const row = await runOr404(me, params.id);
	const db = getDb();
	const filter = parseRunFilter(url.searchParams);
	const page = Number(url.searchParams.get('page') ?? 1) || 1;
	const [summary, rules, rows, cleared, held, recipes] = await Promise.all([
		runSummary(db, row),
		rulePassRates(db, row.run.id),
		runRows(db, row.run.id),
		countCleared(db, { runId: row.run.id, projectId: row.project.id }),
		countBatchHeld(db, row.project.id, row.run.id),
		projectRecipes(db, row.project.id)
	]);
	return {
		summary,
		project: row.project,
		rules,
		filter,
		view: runView(rows, filter, page),
		cleared,
		held,
		recipes: recipes.map((r) => ({ id: r.id, name: r.name })),
		batchForm: await superValidate(zod4(batchRepairFormSchema), { id: 'run-batch' })
	};
};

export const actions: Actions = {
	/** Repairs the run's held revisions that have no repair yet; each repair lands in this run. */
	batchRepair: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'engineer');
		const row = await runOr404(me, params.id);
		const form = await superValidate(request, zod4(batchRepairFormSchema));
		if (!form.valid) return fail(400, { form });
		const raw = form.data.recipe;
		if (raw !== 'standard' && !/^\d{1,10}$/.test(raw)) return message(form, 'No such recipe in this project.', { status: 404 });
		try {
			const res = await repairBatch(getDb(), me, row.project.slug, raw === 'standard' ? null : Number(raw), row.run.id);
			return message(form, `${res.queued} repairs queued${res.skipped ? `, ${res.skipped} already running` : ''}. Each becomes a new revision in this run, to review.`);
		} catch (e) {
			return formFailure(form, e);
		}
	}
};
