// Decisions on many revisions at once (the queue's action bar, POST /api/v1/queue/bulk). Each revision
// goes through the same service as on its own page, in a transaction of its own: the permission
// check, the states an event may start from (applyEvent), four-eyes and the repair limits all hold per
// revision, and one refusal neither stops nor undoes the others. Refusals come back with the reason.
import { and, eq, inArray } from 'drizzle-orm';
import type { BulkInput } from '../bulk-form';
import { assertAssignable, assignRevision } from './assignment';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { part, project, revision } from './db/schema';
import { recheck, returnRevision, signOff } from './decisions';
import { asDomainError, publicMessage } from './errors';
import { assertCan, loadRevisionForUser } from './revisions';
import { loggable } from './api/respond';

export interface BulkOutcome {
	id: number;
	/** "Part name rev N", or "revision N" when it is not in the team. */
	label: string;
	/** Why it was refused; absent for the ones done. */
	reason?: string;
}
export interface BulkResult {
	action: BulkInput['action'];
	done: BulkOutcome[];
	refused: BulkOutcome[];
}

const PERMISSION = { assign: 'assign', recheck: 'recheck', return: 'return', 'sign-off': 'sign-off' } as const;

export async function bulkAct(db: Db, u: SessionUser, input: BulkInput): Promise<BulkResult> {
	// Someone who may not do it at all is refused once, not once per revision.
	assertCan(u, PERMISSION[input.action]);
	const ids = [...new Set(input.revisionIds)];
	const assignee = input.action === 'assign' && input.assignee ? input.assignee : null;
	// Checked once here, so a stranger as assignee is refused once, not once per revision (assignRevision checks it too).
	await assertAssignable(db, u, assignee);
	const done: number[] = [];
	const refused = new Map<number, string>();
	for (const id of ids) {
		try {
			const ctx = await loadRevisionForUser(db, u, id);
			if (input.action === 'assign') await assignRevision(db, u, [id], assignee);
			else if (input.action === 'recheck') await recheck(db, u, ctx);
			else if (input.action === 'return') await returnRevision(db, u, ctx, input.reason);
			else await signOff(db, u, ctx, input.note || null, null);
			done.push(id);
		} catch (e) {
			const d = asDomainError(e);
			if (!d) console.error('[shellgate bulk]', loggable(e));
			refused.set(id, d ? publicMessage(d) : 'Not done: something went wrong on the server. It has been logged.');
		}
	}
	const labels = new Map(
		(
			await db
				.select({ id: revision.id, number: revision.number, partName: part.name })
				.from(revision)
				.innerJoin(part, eq(part.id, revision.partId))
				.innerJoin(project, eq(project.id, part.projectId))
				.where(and(inArray(revision.id, ids), eq(project.teamId, u.teamId)))
		).map((r) => [r.id, `${r.partName} rev ${r.number}`])
	);
	// Names only of the team's own revisions; another team's id stays a number.
	const label = (id: number) => labels.get(id) ?? `revision ${id}`;
	return { action: input.action, done: done.map((id) => ({ id, label: label(id) })), refused: [...refused].map(([id, reason]) => ({ id, label: label(id), reason })) };
}
