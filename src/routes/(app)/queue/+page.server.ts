import { error, fail } from '@sveltejs/kit';
import { and, eq, sql } from 'drizzle-orm';
import { unionAll } from 'drizzle-orm/mysql-core';
import { message, superValidate, type ErrorStatus } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { bulkSchema } from '$lib/bulk-form';
import { requireRole } from '$lib/server/auth';
import { bulkAct, type BulkResult } from '$lib/server/bulk';
import { getDb } from '$lib/server/db';
import { project, run, user, userRole } from '$lib/server/db/schema';
import { parseQueueFilter, queryQueue } from '$lib/server/queue-view';
import { asDomainError, httpStatus, publicMessage } from '$lib/server/errors';
import type { Actions, PageServerLoad } from './$types';

// Built once: the adapter turns the schema into the form's defaults and constraints.
const bulkAdapter = zod4(bulkSchema);

export const load: PageServerLoad = async ({ locals, url }) => {
	const me = requireRole(locals);
	let filter;
	try {
		filter = parseQueueFilter(url.searchParams);
	} catch {
		error(400, 'The queue address has a filter value Shellgate does not know. Clear the filters and try again.');
	}
	const db = getDb();
	// The filter menus' projects and people come back in one round trip, told apart by `kind`.
	const menus = unionAll(
		db.select({ kind: sql<'project' | 'person'>`'project'`.as('kind'), key: project.slug, name: project.name }).from(project).where(eq(project.teamId, me.teamId)),
		db
			.selectDistinct({ kind: sql<'project' | 'person'>`'person'`.as('kind'), key: user.id, name: user.name })
			.from(user)
			.innerJoin(userRole, eq(userRole.userId, user.id))
			.where(eq(user.teamId, me.teamId))
	).orderBy(sql`kind`, sql`name`);
	const runRow = filter.run
		? db.select({ id: run.id, name: run.name }).from(run).innerJoin(project, eq(project.id, run.projectId)).where(and(eq(run.id, filter.run), eq(project.teamId, me.teamId))).limit(1)
		: Promise.resolve([]);
	const [queue, menuRows, [runInfo], bulkForm] = await Promise.all([queryQueue(db, me, filter), menus, runRow, superValidate(bulkAdapter, { errors: false })]);
	const projects = menuRows.filter((m) => m.kind === 'project').map((m) => ({ slug: m.key, name: m.name }));
	const engineers = menuRows.filter((m) => m.kind === 'person').map((m) => ({ id: m.key, name: m.name }));
	return { queue, filter, projects, people: engineers, run: runInfo ?? null, bulkForm };
};

export const actions: Actions = {
	/** The action bar: one decision on the ticked revisions, each decided on its own (see bulk.ts). */
	bulk: async ({ locals, request }) => {
		const me = requireRole(locals);
		const form = await superValidate(request, bulkAdapter);
		if (!form.valid) return fail(400, { form });
		try {
			const result = await bulkAct(getDb(), me, form.data);
			return message<BulkResult | string>(form, result);
		} catch (e) {
			const d = asDomainError(e);
			if (!d) throw e;
			return message<BulkResult | string>(form, publicMessage(d), { status: httpStatus(d) as ErrorStatus });
		}
	}
};
