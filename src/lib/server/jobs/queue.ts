// The job queue in MariaDB. Workers claim with SELECT … FOR UPDATE SKIP LOCKED, so two workers never
// get the same job; a claim is a lease that the worker's heartbeat extends. A job whose lease ran out
// (worker died or hung) is claimable again; after maxAttempts its revision is marked check-incomplete
// (the check could not finish: our fault, not the file's). Only a file the engine refused is unreadable.
import { and, asc, eq, lt, or, sql } from 'drizzle-orm';
import type { Db } from '../db';
import { job, revision } from '../db/schema';
import { audit } from '../audit';
import { withoutPaths } from '../reasons';
import { applyEvent } from '../revision-events';
import { DomainError } from '../../domain-error';

export const LEASE_MS = 30_000;

export type ClaimedJob = typeof job.$inferSelect;

export async function enqueueRepair(tx: Pick<Db, 'insert'>, revisionId: number, payload: unknown, maxAttempts: number): Promise<void> {
	await tx.insert(job).values({ kind: 'repair', revisionId, payload, maxAttempts });
}

export async function enqueueCheck(tx: Pick<Db, 'insert'>, revisionId: number, maxAttempts: number): Promise<void> {
	await tx.insert(job).values({ kind: 'check', revisionId, maxAttempts });
}

/** Claims the oldest claimable job, or returns null. Jobs out of attempts are closed on the way. */
export async function claimJob(db: Db, workerId: string, leaseMs = LEASE_MS): Promise<ClaimedJob | null> {
	for (let guard = 0; guard < 20; guard++) {
		const result = await db.transaction(async (tx) => {
			const now = new Date();
			const [row] = await tx
				.select()
				.from(job)
				.where(or(eq(job.status, 'queued'), and(eq(job.status, 'running'), lt(job.leaseUntil, now))))
				.orderBy(asc(job.id))
				.limit(1)
				.for('update', { skipLocked: true });
			if (!row) return { kind: 'none' as const };
			if (row.attempts >= row.maxAttempts) {
				const reason = `The check gave up after ${row.attempts} attempts. Last problem: ${row.lastError ?? 'the worker stopped answering (killed, out of memory or over its time limit).'}`;
				await tx.update(job).set({ status: 'failed', finishedAt: now, lastError: withoutPaths(reason).slice(0, 1000) }).where(eq(job.id, row.id));
				await closeFailed(tx as unknown as Db, row, reason, 'incomplete');
				return { kind: 'closed' as const };
			}
			const leaseUntil = new Date(now.getTime() + leaseMs);
			await tx
				.update(job)
				.set({ status: 'running', attempts: row.attempts + 1, workerId, leaseUntil, heartbeatAt: now, stage: 'queued for engine', percent: 0 })
				.where(eq(job.id, row.id));
			const [rev] = await tx.select({ status: revision.status }).from(revision).where(eq(revision.id, row.revisionId)).limit(1);
			// A retry finds the revision checking already: one check-started per check, not per attempt.
			if (row.kind === 'check' && rev && rev.status !== 'checking') {
				try {
					await applyEvent(tx as unknown as Db, row.revisionId, 'check-started', { actor: null, detail: { job: row.id, attempt: row.attempts + 1, workerId } });
				} catch (e) {
					if (!(e instanceof DomainError && (e.kind === 'conflict' || e.kind === 'not-found'))) throw e;
					// The revision moved on (or is gone) since the job was queued: the check no longer applies.
					// Closing the job keeps it from blocking the queue; the revision stays as it is.
					await tx.update(job).set({ status: 'failed', finishedAt: now, lastError: withoutPaths(e.message).slice(0, 1000) }).where(eq(job.id, row.id));
					return { kind: 'closed' as const };
				}
			}
			return { kind: 'claimed' as const, job: { ...row, status: 'running' as const, attempts: row.attempts + 1, workerId, leaseUntil } };
		});
		if (result.kind === 'claimed') return result.job;
		if (result.kind === 'none') return null;
	}
	return null;
}

/** Extends the lease and records progress; false when the job is no longer this worker's. */
export async function heartbeat(db: Db, jobId: number, workerId: string, stage: string, percent: number, leaseMs = LEASE_MS): Promise<boolean> {
	const now = new Date();
	const [res] = await db
		.update(job)
		.set({ heartbeatAt: now, leaseUntil: new Date(now.getTime() + leaseMs), stage: stage.slice(0, 40), percent: Math.max(0, Math.min(100, Math.round(percent))) })
		.where(and(eq(job.id, jobId), eq(job.workerId, workerId), eq(job.status, 'running')));
	return res.affectedRows > 0;
}

/**
 * Locks the job row inside `tx` and checks it is still this worker's; the result is written in the
 * same transaction, so a job retried elsewhere is never counted twice.
 */
export async function lockOwnJob(tx: Db, jobId: number, workerId: string): Promise<boolean> {
	const [row] = await tx.select().from(job).where(eq(job.id, jobId)).limit(1).for('update');
	return !!row && row.status === 'running' && row.workerId === workerId;
}

export async function finishJob(tx: Db, jobId: number): Promise<void> {
	await tx.update(job).set({ status: 'done', percent: 100, stage: 'done', finishedAt: new Date() }).where(eq(job.id, jobId));
}

/**
 * How a failed attempt ends: `retry` (tried again until out of attempts, then the check is
 * incomplete), `unreadable` (the file itself cannot be read; no retry), or `incomplete` (the check
 * cannot finish and retrying will not help, e.g. the stored file is missing; no retry).
 */
export type FailureEnding = 'retry' | 'unreadable' | 'incomplete';

/** A failed attempt: retried later unless it ends at once (`unreadable`, `incomplete`) or is out of attempts. */
export async function failAttempt(db: Db, jobId: number, workerId: string, message: string, ending: FailureEnding): Promise<void> {
	await db.transaction(async (tx) => {
		if (!(await lockOwnJob(tx as unknown as Db, jobId, workerId))) return;
		const [row] = await tx.select().from(job).where(eq(job.id, jobId)).limit(1);
		if (ending !== 'retry' || row.attempts >= row.maxAttempts) {
			const reason = ending !== 'retry' ? message : `The check gave up after ${row.attempts} attempts. Last problem: ${message}`;
			await tx.update(job).set({ status: 'failed', lastError: withoutPaths(reason).slice(0, 1000), finishedAt: new Date() }).where(eq(job.id, jobId));
			await closeFailed(tx as unknown as Db, row, reason, ending === 'unreadable' ? 'unreadable' : 'incomplete');
		} else {
			await tx.update(job).set({ status: 'queued', lastError: withoutPaths(message).slice(0, 1000), workerId: null, leaseUntil: null, stage: 'waiting to retry' }).where(eq(job.id, jobId));
		}
	});
}

/**
 * A check whose file cannot be read makes its revision unreadable; one that could not finish for any
 * other reason makes it check-incomplete. A failed repair leaves the original as it was.
 */
async function closeFailed(tx: Db, row: ClaimedJob, reason: string, why: 'unreadable' | 'incomplete'): Promise<void> {
	if (row.kind === 'check') {
		if (why === 'unreadable') await markUnreadable(tx, row.revisionId, reason, row.id);
		else await markCheckIncomplete(tx, row.revisionId, reason, row.id);
	} else await audit(tx, null, 'revision', row.revisionId, 'repair-failed', null, null, { job: row.id, reason: withoutPaths(reason) });
}

export async function markUnreadable(tx: Db, revisionId: number, rawReason: string, jobId: number | null): Promise<void> {
	await systemEvent(tx, revisionId, 'file-unreadable', rawReason, jobId);
}

/** The check could not finish (time limit, worker crash, stored file missing): retryable by a re-check. */
export async function markCheckIncomplete(tx: Db, revisionId: number, rawReason: string, jobId: number): Promise<void> {
	await systemEvent(tx, revisionId, 'check-incomplete', rawReason, jobId);
}

/**
 * A failure event from the worker. The job is closed whatever happens here, so a revision that is
 * gone, or was moved on meanwhile, is left as it is rather than failing the job's transaction.
 */
async function systemEvent(tx: Db, revisionId: number, event: 'file-unreadable' | 'check-incomplete', rawReason: string, jobId: number | null): Promise<void> {
	const reason = withoutPaths(rawReason);
	try {
		await applyEvent(tx, revisionId, event, { actor: null, reason, detail: { ...(jobId !== null ? { job: jobId } : {}), reason } });
	} catch (e) {
		if (!(e instanceof DomainError && (e.kind === 'not-found' || e.kind === 'conflict'))) throw e;
	}
}

export async function queueCounts(db: Db): Promise<Record<string, number>> {
	const rows = await db.select({ status: job.status, n: sql<number>`count(*)` }).from(job).groupBy(job.status);
	return Object.fromEntries(rows.map((r) => [r.status, Number(r.n)]));
}
