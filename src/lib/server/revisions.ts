// Revisions: finding them for a person or a worker, and the permission check services share.
// Creating them is in ingest.ts, decisions on them in decisions.ts, assigning them in assignment.ts;
// every status change goes through applyEvent (revision-events.ts).
import { and, desc, eq } from 'drizzle-orm';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { checkRun, part, project, revision } from './db/schema';
import { can, type Action } from '../permissions';
import { DomainError } from '../domain-error';

export function assertCan(u: SessionUser, action: Action): void {
	if (!can(u, action)) throw new DomainError('forbidden', `Your roles (${u.roles.join(', ') || 'none'}) do not allow this: ${action.replace(/-/g, ' ')}.`);
}

export async function findProjectForUser(db: Db, u: SessionUser, slugOrId: string) {
	const [p] = await db
		.select()
		.from(project)
		.where(and(/^\d+$/.test(slugOrId) ? eq(project.id, Number(slugOrId)) : eq(project.slug, slugOrId), eq(project.teamId, u.teamId)))
		.limit(1);
	if (!p) throw new DomainError('not-found', `No project "${slugOrId.slice(0, 80)}" in your team.`);
	return p;
}

/** A revision with its part and project, for workers (no team check: jobs act for the system). */
export async function loadRevisionContext(db: Db, id: number) {
	const [row] = await db
		.select({ rev: revision, part, project })
		.from(revision)
		.innerJoin(part, eq(part.id, revision.partId))
		.innerJoin(project, eq(project.id, part.projectId))
		.where(eq(revision.id, id))
		.limit(1);
	return row ?? null;
}

export async function loadRevisionForUser(db: Db, u: SessionUser, id: number) {
	const [row] = await db
		.select({ rev: revision, part, project })
		.from(revision)
		.innerJoin(part, eq(part.id, revision.partId))
		.innerJoin(project, eq(project.id, part.projectId))
		.where(and(eq(revision.id, id), eq(project.teamId, u.teamId)))
		.limit(1);
	if (!row) throw new DomainError('not-found', `No revision ${id} in your team.`);
	return row;
}
export type RevisionContext = Awaited<ReturnType<typeof loadRevisionForUser>>;

export async function latestCheck(db: Db, revisionId: number) {
	const [run] = await db.select().from(checkRun).where(eq(checkRun.revisionId, revisionId)).orderBy(desc(checkRun.id)).limit(1);
	return run ?? null;
}
