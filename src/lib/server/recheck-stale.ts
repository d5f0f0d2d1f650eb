// Re-checking every undecided revision of a project whose verdict came from an older gate profile
// version than the project's newest. Each revision moves in its own transaction through `recheck`,
// the one path a single re-check takes, so a revision decided meanwhile is skipped, not overwritten.
import { and, eq, inArray, lt, sql } from 'drizzle-orm';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { checkRun, gateProfile, part, revision } from './db/schema';
import { recheck } from './decisions';
import { assertCan, findProjectForUser, loadRevisionForUser } from './revisions';
import { DomainError } from '../domain-error';

/** Undecided: a verdict exists and nobody has signed it off or returned it yet. */
export const UNDECIDED = ['held', 'clear', 'repair-proposed'] as const;

export async function staleRevisionIds(db: Db, projectId: number): Promise<number[]> {
	const [cur] = await db.select({ v: sql<number | null>`max(${gateProfile.version})` }).from(gateProfile).where(eq(gateProfile.projectId, projectId));
	if (cur?.v === null || cur?.v === undefined) return [];
	const rows = await db
		.select({ id: revision.id })
		.from(revision)
		.innerJoin(part, eq(part.id, revision.partId))
		.innerJoin(checkRun, eq(checkRun.id, revision.latestCheckId))
		.innerJoin(gateProfile, eq(gateProfile.id, checkRun.gateProfileId))
		.where(and(eq(part.projectId, projectId), inArray(revision.status, [...UNDECIDED]), lt(gateProfile.version, Number(cur.v))));
	return rows.map((r) => r.id);
}

export async function recheckStale(db: Db, u: SessionUser, projectSlug: string): Promise<{ queued: number; skipped: number }> {
	assertCan(u, 'recheck');
	const p = await findProjectForUser(db, u, projectSlug);
	let queued = 0;
	let skipped = 0;
	for (const id of await staleRevisionIds(db, p.id)) {
		try {
			await recheck(db, u, await loadRevisionForUser(db, u, id));
			queued++;
		} catch (e) {
			// Decided or already re-checking since the list was read: leave it as it is.
			if (e instanceof DomainError && e.kind === 'conflict') skipped++;
			else throw e;
		}
	}
	return { queued, skipped };
}
