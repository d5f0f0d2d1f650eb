// One mail per run and person when a generator run's checks are done, instead of one per revision.
// A run is due when it has revisions no digest covered yet, none of its revisions awaits or is under
// check, and nothing in it changed for the settle time (RUN_DIGEST_SETTLE_MS), so a pipeline still
// uploading is not digested half-way. The digest is claimed by a conditional UPDATE of
// run.digest_through_revision_id in the transaction that queues its mail: with several app processes
// exactly one of them sends it.
import { and, asc, eq, gt, inArray, lte, sql } from 'drizzle-orm';
import { config } from './config';
import type { Db } from './db';
import { part, project, revision, run, user } from './db/schema';
import { queueMail, simpleMail } from './mail';
import { fmtCount, plural } from '../format';
import { REVISION_STATES, type RevisionState } from '../revision-states';

/** Held revisions listed by name in one digest; the rest are counted and on the run page. */
export const DIGEST_HELD_LISTED = 40;

/** Runs with revisions after their digest mark, all checked, and quiet since `quietSince`. */
async function dueRuns(db: Db, quietSince: Date) {
	const candidates = await db
		.select({ id: run.id, through: run.digestThroughRevisionId, maxId: sql<number>`max(${revision.id})` })
		.from(run)
		.innerJoin(revision, and(eq(revision.runId, run.id), gt(revision.id, sql`coalesce(${run.digestThroughRevisionId}, 0)`)))
		.groupBy(run.id, run.digestThroughRevisionId)
		.limit(100);
	const due: { id: number; through: number | null; maxId: number }[] = [];
	for (const c of candidates) {
		const [s] = await db
			.select({
				pending: sql<number>`coalesce(sum(${revision.status} in ('awaiting-check', 'checking')), 0)`,
				quiet: sql<number>`greatest(max(${revision.updatedAt}), max(${revision.createdAt})) <= ${quietSince}`
			})
			.from(revision)
			.where(eq(revision.runId, c.id));
		if (Number(s.pending) === 0 && Number(s.quiet) === 1) due.push({ id: c.id, through: c.through, maxId: Number(c.maxId) });
	}
	return due;
}

/**
 * Queues the digests of every due run; returns how many runs were digested by this call. Safe to call
 * from every process on every tick.
 */
export async function sendRunDigests(db: Db, settleMs = config.runDigestSettleMs, now = new Date()): Promise<number> {
	const due = await dueRuns(db, new Date(now.getTime() - settleMs));
	let sent = 0;
	for (const d of due) if (await digestRun(db, d.id, d.through, d.maxId)) sent++;
	return sent;
}

async function digestRun(db: Db, runId: number, through: number | null, maxId: number): Promise<boolean> {
	return db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		// The claim: only the process whose UPDATE still sees the old mark goes on.
		const [res] = (await tx
			.update(run)
			.set({ digestThroughRevisionId: maxId })
			.where(and(eq(run.id, runId), through === null ? sql`${run.digestThroughRevisionId} is null` : eq(run.digestThroughRevisionId, through)))) as unknown as [{ affectedRows: number }];
		if (res.affectedRows !== 1) return false;
		const [info] = await tx.select({ name: run.name, kind: run.kind, projectName: project.name }).from(run).innerJoin(project, eq(project.id, run.projectId)).where(eq(run.id, runId)).limit(1);
		const covered = await tx
			.select({ id: revision.id, number: revision.number, status: revision.status, reason: revision.statusReason, iteration: revision.iteration, uploaderId: revision.uploaderId, partName: part.name })
			.from(revision)
			.innerJoin(part, eq(part.id, revision.partId))
			.where(and(eq(revision.runId, runId), gt(revision.id, through ?? 0), lte(revision.id, maxId)))
			.orderBy(asc(sql`coalesce(${revision.iteration}, ${revision.number})`), asc(revision.id));
		const uploaders = [...new Set(covered.map((c) => c.uploaderId))];
		if (uploaders.length === 0) return true;
		const people = await tx.select({ id: user.id, email: user.email, name: user.name, disabled: user.disabled }).from(user).where(inArray(user.id, uploaders));
		for (const p of people) {
			if (p.disabled) continue;
			const mine = covered.filter((c) => c.uploaderId === p.id);
			await queueMail(tx, digestMail(p, { id: runId, ...info }, mine, through !== null));
		}
		return true;
	});
}

type Covered = { id: number; number: number; status: RevisionState; reason: string | null; iteration: number | null; partName: string };

/** The digest's words: counts by state, the held ones with their first reason, a link to the run. */
export function digestMail(to: { email: string; name: string }, r: { id: number; name: string; kind: string; projectName: string }, revs: Covered[], later: boolean) {
	const counts = new Map<RevisionState, number>();
	for (const c of revs) counts.set(c.status, (counts.get(c.status) ?? 0) + 1);
	const countLine = REVISION_STATES.filter((s) => counts.get(s)).map((s) => `${fmtCount(counts.get(s))} ${s.replace(/-/g, ' ')}`).join(', ');
	const held = revs.filter((c) => c.status === 'held' || c.status === 'unreadable' || c.status === 'check-incomplete');
	const name = (c: Covered) => `${c.partName} rev ${c.number}${c.iteration !== null ? ` (iteration ${c.iteration})` : ''}`;
	const firstReason = (c: Covered) => (c.reason ?? c.status.replace(/-/g, ' ')).split('; ')[0];
	const lines = [
		`Hello ${to.name},`,
		`The checks of ${later ? 'the newest uploads of ' : ''}the generator run "${r.name}" (${r.projectName}, ${r.kind}) have finished: ${plural(revs.length, 'revision')} of yours${countLine ? `: ${countLine}` : ''}.`,
		...(held.length
			? [
					`Held back, with the first reason for each:`,
					...held.slice(0, DIGEST_HELD_LISTED).map((c) => `• ${name(c)}: ${firstReason(c)}`),
					...(held.length > DIGEST_HELD_LISTED ? [`…and ${fmtCount(held.length - DIGEST_HELD_LISTED)} more; the run page lists them all.`] : [])
				]
			: ['None was held back.'])
	];
	const subject = `Run "${r.name}" checked: ${plural(revs.length, 'revision')}, ${fmtCount(held.length)} held (${r.projectName})`;
	return simpleMail(to.email, subject, lines, { href: `${config.origin}/runs/${r.id}`, label: 'Open the run in Shellgate' });
}
