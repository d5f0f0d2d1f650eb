import { error, fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { eq, sql } from 'drizzle-orm';
import { unionAll } from 'drizzle-orm/mysql-core';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { project, user, userRole } from '$lib/server/db/schema';
import { parseQueueFilter, queryQueue } from '$lib/server/queue-view';
import { assignRevision } from '$lib/server/assignment';
import { formFailure } from '$lib/server/errors';
import { assignFormSchema } from '$lib/forms';
import type { Actions, PageServerLoad } from './$types';

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
	const [queue, menuRows] = await Promise.all([queryQueue(db, me, filter), menus]);
	const projects = menuRows.filter((m) => m.kind === 'project').map((m) => ({ slug: m.key, name: m.name }));
	const engineers = menuRows.filter((m) => m.kind === 'person').map((m) => ({ id: m.key, name: m.name }));
	return { queue, filter, projects, people: engineers, assignForm: await superValidate(zod4(assignFormSchema), { id: 'assign' }) };
};

export const actions: Actions = {
	assign: async ({ locals, request }) => {
		const me = requireRole(locals, 'engineer');
		const form = await superValidate(request, zod4(assignFormSchema));
		if (!form.valid) return fail(400, { form });
		try {
			const n = await assignRevision(getDb(), me, form.data.ids, form.data.assignee || null);
			return message(form, `${n} assigned.`);
		} catch (e) {
			return formFailure(form, e);
		}
	}
};
