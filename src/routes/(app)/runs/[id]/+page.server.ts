import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { isDomainError } from '$lib/domain-error';
import { countCleared } from '$lib/server/dataset-export';
import { loadRunForUser, runSummary } from '$lib/server/runs';
import { parseRunFilter, rulePassRates, runRows, runView } from '$lib/server/run-view';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const me = requireRole(locals);
	if (!/^\d{1,10}$/.test(params.id)) error(404, `No run "${params.id.slice(0, 40)}".`);
	const db = getDb();
	let row;
	try {
		row = await loadRunForUser(db, me, Number(params.id));
	} catch (e) {
		if (isDomainError(e, 'not-found')) error(404, e.message);
		throw e;
	}
	const filter = parseRunFilter(url.searchParams);
	const page = Number(url.searchParams.get('page') ?? 1) || 1;
	const [summary, rules, rows, cleared] = await Promise.all([runSummary(db, row), rulePassRates(db, row.run.id), runRows(db, row.run.id), countCleared(db, { runId: row.run.id, projectId: row.project.id })]);
	return { summary, project: row.project, rules, filter, view: runView(rows, filter, page), cleared };
};
