// Assigning revisions to an engineer (or to nobody): who works on them, not what state they are in.
import { eq } from 'drizzle-orm';
import { audit } from './audit';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { revision } from './db/schema';
import { queueChanged } from './queue-view';
import { assertCan, loadRevisionForUser } from './revisions';

export async function assignRevision(db: Db, u: SessionUser, revisionIds: number[], assigneeId: string | null): Promise<number> {
	assertCan(u, 'assign');
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
