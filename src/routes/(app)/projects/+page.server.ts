import { asc, eq, sql } from 'drizzle-orm';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { part, project, revision } from '$lib/server/db/schema';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	const me = requireRole(locals);
	const rows = await getDb()
		.select({
			slug: project.slug,
			name: project.name,
			description: project.description,
			units: project.units,
			cell: project.targetCellSize,
			parts: sql<number>`count(distinct ${part.id})`,
			revisions: sql<number>`count(${revision.id})`,
			held: sql<number>`sum(${revision.status} = 'held')`
		})
		.from(project)
		.leftJoin(part, eq(part.projectId, project.id))
		.leftJoin(revision, eq(revision.partId, part.id))
		.where(eq(project.teamId, me.teamId))
		.groupBy(project.id)
		.orderBy(asc(project.name));
	return { projects: rows.map((r) => ({ ...r, parts: Number(r.parts), revisions: Number(r.revisions), held: Number(r.held ?? 0) })) };
};
