// The job queue in MariaDB. Workers claim with SELECT … FOR UPDATE SKIP LOCKED, so two workers never
// get the same job; a claim is a lease that the worker's heartbeat extends. A job whose lease ran out
// (worker died or hung) is claimable again; after maxAttempts its revision is marked check-incomplete
// (the check could not finish: our fault, not the file's). Only a file the engine refused is unreadable.
import { and, asc, eq, lt, or, sql } from 'drizzle-orm';
import type { Db } from '../db';
import { job, revision } from '../db/schema';
import { audit } from '../audit';
import { withoutPaths } from '../reasons';

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
			if (row.kind === 'check' && rev && rev.status !== 'checking') {
				await tx.update(revision).set({ status: 'checking', updatedAt: now }).where(eq(revision.id, row.revisionId));
				await audit(tx, null, 'revision', row.revisionId, 'check-started', rev.status, 'checking', { job: row.id, attempt: row.attempts + 1, workerId });
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
		if (why === 'unreadable') await markUnreadable(tx, row.revisionId, reason, null);
		else await markCheckIncomplete(tx, row.revisionId, reason, row.id);
	} else await audit(tx, null, 'revision', row.revisionId, 'repair-failed', null, null, { job: row.id, reason: withoutPaths(reason) });
}

export async function markUnreadable(tx: Db, revisionId: number, rawReason: string, actorId: string | null): Promise<void> {
	const reason = withoutPaths(rawReason);
	const [rev] = await tx.select({ status: revision.status }).from(revision).where(eq(revision.id, revisionId)).limit(1);
	await tx.update(revision).set({ status: 'unreadable', statusReason: reason.slice(0, 1000), updatedAt: new Date() }).where(eq(revision.id, revisionId));
	await audit(tx, actorId, 'revision', revisionId, 'unreadable', rev?.status ?? null, 'unreadable', { reason });
}

/** The check could not finish (time limit, worker crash, stored file missing): retryable by a re-check. */
export async function markCheckIncomplete(tx: Db, revisionId: number, rawReason: string, jobId: number): Promise<void> {
	const reason = withoutPaths(rawReason);
	const [rev] = await tx.select({ status: revision.status }).from(revision).where(eq(revision.id, revisionId)).limit(1);
	if (!rev) return;
	await tx.update(revision).set({ status: 'check-incomplete', statusReason: reason.slice(0, 1000), updatedAt: new Date() }).where(eq(revision.id, revisionId));
	await audit(tx, null, 'revision', revisionId, 'check-incomplete', rev.status, 'check-incomplete', { job: jobId, reason });
}

export async function queueCounts(db: Db): Promise<Record<string, number>> {
	const rows = await db.select({ status: job.status, n: sql<number>`count(*)` }).from(job).groupBy(job.status);
	return Object.fromEntries(rows.map((r) => [r.status, Number(r.n)]));
}
