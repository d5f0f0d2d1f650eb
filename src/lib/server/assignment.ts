// Assigning revisions to an engineer (or to nobody): who works on them, not what state they are in.
import { and, eq } from 'drizzle-orm';
import { audit } from './audit';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { revision, user } from './db/schema';
import { queueChanged } from './queue-view';
import { assertCan, loadRevisionForUser } from './revisions';
import { DomainError } from '../domain-error';

/** Refuses an assignee who is not a member of the caller's team (nobody, null, is always allowed). */
export async function assertAssignable(db: Db, u: SessionUser, assigneeId: string | null): Promise<void> {
	if (assigneeId === null) return;
	const [p] = await db.select({ id: user.id }).from(user).where(and(eq(user.id, assigneeId), eq(user.teamId, u.teamId))).limit(1);
	if (!p) throw new DomainError('invalid', 'Nobody by that id is in your team; pick the assignee from the list.');
}

export async function assignRevision(db: Db, u: SessionUser, revisionIds: number[], assigneeId: string | null): Promise<number> {
	assertCan(u, 'assign');
	await assertAssignable(db, u, assigneeId);
	let n = 0;
	await db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		for (const id of revisionIds) {
			const ctx = await loadRevisionForUser(tx, u, id);
			await tx.update(revision).set({ assigneeId, updatedAt: new Date() }).where(eq(revision.id, ctx.rev.id));
			await audit(tx, u.id, 'revision', id, 'assigned', null, null, { assigneeId });
			n++;
		}
	});
	queueChanged();
	return n;
}
