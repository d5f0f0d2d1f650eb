import { error, fail } from '@sveltejs/kit';
import { eq, sql } from 'drizzle-orm';
import { unionAll } from 'drizzle-orm/mysql-core';
import { z } from 'zod';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { project, user, userRole } from '$lib/server/db/schema';
import { parseQueueFilter, queryQueue } from '$lib/server/queue-view';
import { assignRevision } from '$lib/server/assignment';
import { failFor } from '$lib/server/errors';
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
	return { queue, filter, projects, people: engineers };
};

const assignSchema = z.object({ ids: z.array(z.coerce.number().int().positive()).min(1, 'Tick at least one revision.').max(200), assignee: z.string().max(32) });

export const actions: Actions = {
	assign: async ({ locals, request }) => {
		const me = requireRole(locals, 'engineer');
		const fd = await request.formData();
		const parsed = assignSchema.safeParse({ ids: fd.getAll('ids'), assignee: fd.get('assignee') ?? '' });
		if (!parsed.success) return fail(400, { assignError: parsed.error.issues[0].message });
		try {
			const n = await assignRevision(getDb(), me, parsed.data.ids, parsed.data.assignee || null);
			return { assigned: n };
		} catch (e) {
			return failFor(e, 'assignError');
		}
	}
};
