// The one code that writes a revision's status. An event (src/lib/revision-states.ts says from which
// states, to which, and who may cause it) is applied in a transaction with the revision row locked,
// together with its audit row and its mail; jobs, pages and the API all come through here. Called
// with a transaction, it runs as a savepoint of it, so the caller's other writes commit with it.
import { and, eq } from 'drizzle-orm';
import { audit } from './audit';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { part, project, revision } from './db/schema';
import { notifyHeld, notifyRepairAwaits, notifyReturned, notifySignedOff, type RevisionRef } from './notify';
import { queueChanged } from './queue-view';
import { withoutPaths } from './reasons';
import { DomainError } from '../domain-error';
import { can } from '../permissions';
import { eventAllowedFrom, eventRule, type RevisionEvent, type RevisionState } from '../revision-states';

/** The audit action each event is recorded under (the names the history has always used). */
const AUDIT_ACTION: Record<RevisionEvent, string> = {
	'check-started': 'check-started',
	'check-passed': 'checked',
	'check-held': 'checked',
	'repair-proposed': 'checked',
	'file-unreadable': 'unreadable',
	'check-incomplete': 'check-incomplete',
	return: 'returned',
	'sign-off': 'signed-off',
	'sign-off-override': 'signed-off',
	recheck: 'recheck-requested'
};

const words = (s: string) => s.replace(/-/g, ' ');

export interface EventOptions {
	/** Who causes it; null for the check worker (only events whose permission is null). */
	actor: SessionUser | null;
	/** The revision's status reason afterwards (paths removed; null clears it). */
	reason?: string | null;
	/** Extra facts for the audit row (the reason is added when there is one). */
	detail?: Record<string, unknown>;
	/** Other revision columns written with the status (the check's run). */
	latestCheckId?: number;
	/** For check-held: what the designer is told to change. */
	heldReasons?: string[];
	/** Writes that belong to the event (decision row, queued job), in the same transaction, after the status. */
	after?: (tx: Db, from: RevisionState) => Promise<void>;
}

export interface AppliedEvent {
	from: RevisionState;
	to: RevisionState;
}

/**
 * Applies `event` to revision `revisionId`: locks the row (SELECT … FOR UPDATE), refuses with a
 * DomainError (`not-found`, `forbidden` when the actor may not cause it, `conflict` when the
 * revision is not in a state it starts from), writes status and reason, the audit row, the
 * event's mail and the caller's `after` writes, all or nothing.
 */
export async function applyEvent(db: Db, revisionId: number, event: RevisionEvent, opts: EventOptions): Promise<AppliedEvent> {
	const rule = eventRule(event);
	const { actor } = opts;
	if (actor === null ? rule.permission !== null : rule.permission === null || !can(actor, rule.permission)) {
		throw new DomainError(
			'forbidden',
			rule.permission === null
				? `Only the check worker can cause "${words(event)}".`
				: actor === null
					? `"${words(event)}" is a person's decision; the check worker cannot cause it.`
					: `Your roles (${actor.roles.join(', ') || 'none'}) do not allow this: ${words(rule.permission)}.`
		);
	}
	const applied = await db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		const [cur] = await tx
			.select({ status: revision.status, number: revision.number, partId: revision.partId, uploaderId: revision.uploaderId, parentRevisionId: revision.parentRevisionId, runId: revision.runId })
			.from(revision)
			.where(eq(revision.id, revisionId))
			.limit(1)
			.for('update');
		if (!cur) throw new DomainError('not-found', `No revision ${revisionId}.`);
		if (!eventAllowedFrom(event, cur.status)) {
			throw new DomainError('conflict', `This revision is "${words(cur.status)}"; ${words(AUDIT_ACTION[event])} needs it to be ${rule.from.map((s) => `"${words(s)}"`).join(' or ')}.`);
		}
		const reason = opts.reason ? withoutPaths(opts.reason).slice(0, 1000) : null;
		await tx
			.update(revision)
			.set({ status: rule.to, statusReason: reason, updatedAt: new Date(), ...(opts.latestCheckId !== undefined ? { latestCheckId: opts.latestCheckId } : {}) })
			.where(eq(revision.id, revisionId));
		// The part keeps its newest revision's status beside it for the queue's counts (a no-op for an older revision).
		await tx
			.update(part)
			.set({ latestStatus: rule.to })
			.where(and(eq(part.id, cur.partId), eq(part.latestRevisionId, revisionId)));
		const detail = { ...(reason ? { reason } : {}), ...opts.detail };
		await audit(tx, actor?.id ?? null, 'revision', revisionId, AUDIT_ACTION[event], cur.status, rule.to, Object.keys(detail).length ? detail : null);
		await opts.after?.(tx, cur.status);
		await queueEventMail(tx, event, { id: revisionId, ...cur }, opts);
		return { from: cur.status, to: rule.to };
	});
	queueChanged();
	return applied;
}

/** Who hears of the event (notify.ts writes the mail into the outbox, in this transaction). */
async function queueEventMail(tx: Db, event: RevisionEvent, rev: { id: number; number: number; partId: number; uploaderId: string; parentRevisionId: number | null; runId: number | null }, opts: EventOptions): Promise<void> {
	if (!['return', 'sign-off', 'sign-off-override', 'check-held', 'repair-proposed'].includes(event)) return;
	// A check outcome of a generator run's revision goes into the run's digest (run-digest.ts), not a mail of its own.
	if (rev.runId !== null && (event === 'check-held' || event === 'repair-proposed')) return;
	const [names] = await tx.select({ partName: part.name, projectName: project.name, teamId: project.teamId }).from(part).innerJoin(project, eq(project.id, part.projectId)).where(eq(part.id, rev.partId)).limit(1);
	const ref: RevisionRef = { id: rev.id, number: rev.number, partName: names.partName, projectName: names.projectName, uploaderId: rev.uploaderId };
	if (event === 'return') await notifyReturned(tx, ref, opts.actor!.name, opts.reason ?? '');
	else if (event === 'sign-off' || event === 'sign-off-override') await notifySignedOff(tx, ref, opts.actor!.name);
	else if (event === 'repair-proposed') await notifyRepairAwaits(tx, ref, names.teamId, rev.uploaderId);
	else {
		// For a repair that still fails, the designer of the original upload is the one to tell.
		const designer = rev.parentRevisionId ? await originalUpload(tx, rev.parentRevisionId) : null;
		await notifyHeld(tx, { ...ref, uploaderId: designer?.uploaderId ?? ref.uploaderId }, opts.heldReasons ?? []);
	}
}

async function originalUpload(tx: Db, revisionId: number) {
	let id: number | null = revisionId;
	for (let i = 0; i < 50 && id; i++) {
		const [r] = await tx.select({ id: revision.id, parent: revision.parentRevisionId, uploaderId: revision.uploaderId, source: revision.source }).from(revision).where(eq(revision.id, id)).limit(1);
		if (!r) return null;
		if (r.source !== 'repair' || !r.parent) return r;
		id = r.parent;
	}
	return null;
}
