// One mail per run and person when a generator run's checks are done, instead of one per revision.
// A run is due when something no digest covered yet happened in it (a new revision, or a new check
// of a revision an earlier digest covered: a re-check makes a check run, not a revision), none of its
// revisions awaits or is under check, no repair of one of them is under way, and nothing in it
// changed for the settle time (RUN_DIGEST_SETTLE_MS), so a pipeline still uploading is not digested
// half-way. The digest is claimed by a conditional UPDATE of the run's two marks,
// digest_through_revision_id and digest_through_check_run_id, in the transaction that queues its
// mail: with several app processes exactly one of them sends it.
//
// Who hears: each person who uploaded (or, for a repair, ran) a covered revision, about their own;
// and each reviewer of the team about the covered repair proposals awaiting a sign-off that they
// may give (not the ones they ran themselves), with a link to the queue filtered by the run. One
// mail per person either way.
import { and, asc, eq, gt, inArray, isNotNull, lte, or, sql } from 'drizzle-orm';
import { config } from './config';
import type { Db } from './db';
import { job, part, project, revision, run, user, userRole } from './db/schema';
import { queueMail, simpleMail } from './mail';
import { fmtCount, plural } from '../format';
import { REVISION_STATES, type RevisionState } from '../revision-states';

/** Held revisions (and repair proposals) listed by name in one digest; the rest are counted and on the run page. */
export const DIGEST_HELD_LISTED = 40;

interface Marks {
	id: number;
	through: number | null;
	throughCheck: number | null;
}
interface DueRun extends Marks {
	maxId: number;
	maxCheck: number | null;
}

/** Runs with something after their digest marks, all checked, no repair under way, and quiet since `quietSince`. */
async function dueRuns(db: Db, quietSince: Date): Promise<DueRun[]> {
	// Per run, the newest revision id and the newest check id, each by a loose index scan (one dive per
	// run into revision_run and revision_run_check, which end in them), compared with the run's marks.
	const [maxIds, maxChecks, marks] = await Promise.all([
		db.select({ runId: revision.runId, v: sql<number>`max(${revision.id})` }).from(revision).where(isNotNull(revision.runId)).groupBy(revision.runId),
		db.select({ runId: revision.runId, v: sql<number | null>`max(${revision.latestCheckId})` }).from(revision).where(isNotNull(revision.runId)).groupBy(revision.runId),
		db.select({ id: run.id, through: run.digestThroughRevisionId, throughCheck: run.digestThroughCheckRunId }).from(run)
	]);
	const newestId = new Map(maxIds.map((r) => [r.runId!, Number(r.v)]));
	const newestCheck = new Map(maxChecks.map((r) => [r.runId!, r.v === null ? 0 : Number(r.v)]));
	const candidates: Marks[] = marks.filter((m) => (newestId.get(m.id) ?? 0) > (m.through ?? 0) || (newestCheck.get(m.id) ?? 0) > (m.throughCheck ?? 0)).slice(0, 100);
	const due: DueRun[] = [];
	for (const c of candidates) {
		const [s] = await db
			.select({
				pending: sql<number>`coalesce(sum(${revision.status} in ('awaiting-check', 'checking')), 0)`,
				quiet: sql<number>`greatest(max(${revision.updatedAt}), max(${revision.createdAt})) <= ${quietSince}`,
				maxId: sql<number>`max(${revision.id})`,
				maxCheck: sql<number | null>`max(${revision.latestCheckId})`
			})
			.from(revision)
			.where(eq(revision.runId, c.id));
		if (Number(s.pending) !== 0 || Number(s.quiet) !== 1) continue;
		// A repair asked for but not yet stored as a revision: its revision belongs in this digest.
		const [repairing] = await db
			.select({ id: job.id })
			.from(job)
			.innerJoin(revision, eq(revision.id, job.revisionId))
			.where(and(eq(revision.runId, c.id), eq(job.kind, 'repair'), inArray(job.status, ['queued', 'running'])))
			.limit(1);
		if (repairing) continue;
		due.push({ ...c, maxId: Number(s.maxId), maxCheck: s.maxCheck === null ? null : Number(s.maxCheck) });
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
	for (const d of due) if (await digestRun(db, d)) sent++;
	return sent;
}

const maxOf = (a: number | null, b: number | null) => (a === null ? b : b === null ? a : Math.max(a, b));

async function digestRun(db: Db, d: DueRun): Promise<boolean> {
	return db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		const throughCheck = maxOf(d.throughCheck, d.maxCheck);
		// The claim: only the process whose UPDATE still sees both old marks goes on (<=> is equality that holds for two NULLs).
		const [res] = (await tx
			.update(run)
			.set({ digestThroughRevisionId: Math.max(d.maxId, d.through ?? 0), digestThroughCheckRunId: throughCheck })
			.where(and(eq(run.id, d.id), sql`${run.digestThroughRevisionId} <=> ${d.through}`, sql`${run.digestThroughCheckRunId} <=> ${d.throughCheck}`))) as unknown as [{ affectedRows: number }];
		if (res.affectedRows !== 1) return false;
		const [info] = await tx
			.select({ name: run.name, kind: run.kind, projectName: project.name, teamId: project.teamId })
			.from(run)
			.innerJoin(project, eq(project.id, run.projectId))
			.where(eq(run.id, d.id))
			.limit(1);
		const newOnes = and(gt(revision.id, d.through ?? 0), lte(revision.id, d.maxId));
		const rechecked = d.throughCheck === null || d.maxCheck === null ? undefined : and(gt(revision.latestCheckId, d.throughCheck), lte(revision.latestCheckId, d.maxCheck));
		const rows = await tx
			.select({
				id: revision.id,
				number: revision.number,
				status: revision.status,
				reason: revision.statusReason,
				iteration: revision.iteration,
				uploaderId: revision.uploaderId,
				partName: part.name
			})
			.from(revision)
			.innerJoin(part, eq(part.id, revision.partId))
			.where(and(eq(revision.runId, d.id), rechecked ? or(newOnes, rechecked) : newOnes))
			.orderBy(asc(sql`coalesce(${revision.iteration}, ${revision.number})`), asc(revision.id));
		const covered: (Covered & { uploaderId: string })[] = rows.map((r) => ({ ...r, recheck: r.id <= (d.through ?? 0) }));
		const proposals = covered.filter((c) => c.status === 'repair-proposed');
		const reviewers = proposals.length
			? await tx
					.select({ id: user.id })
					.from(user)
					.innerJoin(userRole, eq(userRole.userId, user.id))
					.where(and(eq(userRole.role, 'reviewer'), eq(user.teamId, info.teamId), eq(user.disabled, false)))
			: [];
		const reviewerIds = new Set(reviewers.map((r) => r.id));
		const recipients = [...new Set([...covered.map((c) => c.uploaderId), ...reviewerIds])];
		if (recipients.length === 0) return true;
		const people = await tx.select({ id: user.id, email: user.email, name: user.name, disabled: user.disabled }).from(user).where(inArray(user.id, recipients));
		for (const p of people) {
			if (p.disabled) continue;
			const mine = covered.filter((c) => c.uploaderId === p.id);
			// Four-eyes: a reviewer is asked only for the proposals someone else ran.
			const awaiting = reviewerIds.has(p.id) ? proposals.filter((c) => c.uploaderId !== p.id) : [];
			if (mine.length === 0 && awaiting.length === 0) continue;
			await queueMail(tx, digestMail(p, { id: d.id, ...info }, mine, d.through !== null, awaiting));
		}
		return true;
	});
}

export type Covered = {
	id: number;
	number: number;
	status: RevisionState;
	reason: string | null;
	iteration: number | null;
	partName: string;
	/** Covered by an earlier digest already: here because it was checked again since. */
	recheck?: boolean;
};

const HELD_STATES: readonly RevisionState[] = ['held', 'unreadable', 'check-incomplete'];

function countLine(revs: Covered[]): string {
	const counts = new Map<RevisionState, number>();
	for (const c of revs) counts.set(c.status, (counts.get(c.status) ?? 0) + 1);
	return REVISION_STATES.filter((s) => counts.get(s)).map((s) => `${fmtCount(counts.get(s))} ${s.replace(/-/g, ' ')}`).join(', ');
}

/**
 * The digest's words: for the person's own revisions, counts by state and the held ones with their
 * first reason (new ones and, apart, the ones checked again since the last digest); for a reviewer,
 * the repair proposals awaiting their sign-off with a link to the queue filtered by the run; and a
 * link to the run (or to that queue, when the mail is only about proposals).
 */
export function digestMail(to: { email: string; name: string }, r: { id: number; name: string; kind: string; projectName: string }, revs: Covered[], later: boolean, awaiting: Covered[] = []) {
	const fresh = revs.filter((c) => !c.recheck);
	const again = revs.filter((c) => c.recheck);
	const name = (c: Covered) => `${c.partName} rev ${c.number}${c.iteration !== null ? ` (iteration ${c.iteration})` : ''}`;
	const firstReason = (c: Covered) => (c.reason ?? c.status.replace(/-/g, ' ')).split('; ')[0];
	const listed = (xs: Covered[], line: (c: Covered) => string, rest: string) => [
		...xs.slice(0, DIGEST_HELD_LISTED).map(line),
		...(xs.length > DIGEST_HELD_LISTED ? [`…and ${fmtCount(xs.length - DIGEST_HELD_LISTED)} more; ${rest}`] : [])
	];
	const held = fresh.filter((c) => HELD_STATES.includes(c.status));
	const queueHref = `${config.origin}/queue?run=${r.id}&status=repair-proposed`;
	const lines = [`Hello ${to.name},`];
	if (fresh.length) {
		const counts = countLine(fresh);
		lines.push(`The checks of ${later ? 'the newest revisions of ' : ''}the generator run "${r.name}" (${r.projectName}, ${r.kind}) have finished: ${plural(fresh.length, 'revision')} of yours${counts ? `: ${counts}` : ''}.`);
		if (held.length) lines.push(`Held back, with the first reason for each:`, ...listed(held, (c) => `• ${name(c)}: ${firstReason(c)}`, 'the run page lists them all.'));
		else lines.push('None was held back.');
	}
	if (again.length) {
		lines.push(
			`${fresh.length ? 'Also checked' : `In the generator run "${r.name}" (${r.projectName}, ${r.kind}), checked`} again since the last digest: ${plural(again.length, 'revision')} of yours: ${countLine(again)}.`,
			...listed(again, (c) => `• ${name(c)}: now ${c.status.replace(/-/g, ' ')}${HELD_STATES.includes(c.status) ? `: ${firstReason(c)}` : ''}`, 'the run page lists them all.')
		);
	}
	if (awaiting.length) {
		lines.push(
			`${plural(awaiting.length, 'repair proposal')} in ${fresh.length || again.length ? 'this run' : `the generator run "${r.name}" (${r.projectName})`} ${awaiting.length === 1 ? 'awaits' : 'await'} your sign-off${revs.some((c) => c.status === 'repair-proposed') ? ' (the repairs you ran yourself are not among them: another reviewer signs those off)' : ''}:`,
			...listed(awaiting, (c) => `• ${name(c)}`, 'the queue lists them all.'),
			`Sign them off together from the queue, filtered by this run: ${queueHref}`
		);
	}
	const subject = fresh.length
		? `Run "${r.name}" checked: ${plural(fresh.length, 'revision')}, ${fmtCount(held.length)} held (${r.projectName})`
		: again.length
			? `Run "${r.name}" checked again: ${plural(again.length, 'revision')}, ${fmtCount(again.filter((c) => HELD_STATES.includes(c.status)).length)} held (${r.projectName})`
			: `Run "${r.name}": ${plural(awaiting.length, 'repair proposal')} ${awaiting.length === 1 ? 'awaits' : 'await'} your sign-off (${r.projectName})`;
	const link = fresh.length || again.length ? { href: `${config.origin}/runs/${r.id}`, label: 'Open the run in Shellgate' } : { href: queueHref, label: "Open the run's repair proposals in the queue" };
	return simpleMail(to.email, subject, lines, link);
}
