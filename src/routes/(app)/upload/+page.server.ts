import { asc, eq } from 'drizzle-orm';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { requireRole } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { getDb } from '$lib/server/db';
import { part, project } from '$lib/server/db/schema';
import { uploadSchema } from '$lib/upload-form';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url }) => {
	const me = requireRole(locals, 'designer', 'engineer');
	const db = getDb();
	const projects = await db.select({ id: project.id, slug: project.slug, name: project.name, units: project.units }).from(project).where(eq(project.teamId, me.teamId)).orderBy(asc(project.name));
	const parts = await db.select({ projectId: part.projectId, slug: part.slug, name: part.name }).from(part).orderBy(asc(part.name));
	const form = await superValidate(
		{ project: url.searchParams.get('project') ?? projects[0]?.slug ?? '', part: url.searchParams.get('part') ?? '', note: '', run: url.searchParams.get('run') ?? '', batch: '' as const },
		zod4(uploadSchema),
		{ errors: false }
	);
	return {
		form,
		projects: projects.map((p) => ({ ...p, parts: parts.filter((x) => x.projectId === p.id).map(({ slug, name }) => ({ slug, name })) })),
		limitMb: Math.round(config.uploadLimitBytes / 1024 / 1024)
	};
};
