// Revisions: finding them for a person, and every state change a person makes (creating them is in ingest.ts).
// Each change is one transaction with its audit row and its mail, so nothing is left half-written.
import { and, desc, eq } from 'drizzle-orm';
import { audit } from './audit';
import type { SessionUser } from './auth';
import { config } from './config';
import type { Db } from './db';
import { checkRun, decision, gateProfile, part, project, revision } from './db/schema';
import { enqueueCheck } from './jobs/queue';
import { notifyReturned, notifySignedOff } from './notify';
import { can, type Action } from '../permissions';
import { repairSignOffGuard, type OverrideInput } from './repair-limits';
import { eventAllowedFrom, eventRule, type RevisionEvent } from '../revision-states';

export class HttpError extends Error {
	constructor(
		public status: number,
		message: string
	) {
		super(message);
	}
}

export function assertCan(u: SessionUser, action: Action): void {
	if (!can(u, action)) throw new HttpError(403, `Your roles (${u.roles.join(', ') || 'none'}) do not allow this: ${action.replace(/-/g, ' ')}.`);
}

export async function findProjectForUser(db: Db, u: SessionUser, slugOrId: string) {
	const [p] = await db
		.select()
		.from(project)
		.where(and(/^\d+$/.test(slugOrId) ? eq(project.id, Number(slugOrId)) : eq(project.slug, slugOrId), eq(project.teamId, u.teamId)))
		.limit(1);
	if (!p) throw new HttpError(404, `No project "${slugOrId.slice(0, 80)}" in your team.`);
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
	if (!row) throw new HttpError(404, `No revision ${id} in your team.`);
	return row;
}

export async function latestCheck(db: Db, revisionId: number) {
	const [run] = await db.select().from(checkRun).where(eq(checkRun.revisionId, revisionId)).orderBy(desc(checkRun.id)).limit(1);
	return run ?? null;
}

type Ctx = Awaited<ReturnType<typeof loadRevisionForUser>>;

/** Applies a person's event (revision-states.ts says from where and to what) with its audit row, under the row lock. */
async function transition(db: Db, u: SessionUser, ctx: Ctx, event: RevisionEvent, action: string, reason: string | null, after?: (tx: Db) => Promise<void>) {
	const { from, to } = eventRule(event);
	await db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		const [cur] = await tx.select({ status: revision.status }).from(revision).where(eq(revision.id, ctx.rev.id)).limit(1).for('update');
		if (!eventAllowedFrom(event, cur.status)) {
			throw new HttpError(409, `This revision is "${cur.status.replace(/-/g, ' ')}"; ${action.replace(/-/g, ' ')} needs it to be ${from.map((s) => `"${s.replace(/-/g, ' ')}"`).join(' or ')}.`);
		}
		await tx.update(revision).set({ status: to, statusReason: reason, updatedAt: new Date() }).where(eq(revision.id, ctx.rev.id));
		await audit(tx, u.id, 'revision', ctx.rev.id, action, cur.status, to, reason ? { reason } : null);
		await after?.(tx);
	});
}

const ref = (ctx: Ctx) => ({ id: ctx.rev.id, number: ctx.rev.number, partName: ctx.part.name, projectName: ctx.project.name, uploaderId: ctx.rev.uploaderId });

export async function returnRevision(db: Db, u: SessionUser, ctx: Ctx, reason: string): Promise<void> {
	assertCan(u, 'return');
	if (!reason.trim()) throw new HttpError(400, 'Say why the revision goes back, so the designer knows what to change.');
	const run = await latestCheck(db, ctx.rev.id);
	await transition(db, u, ctx, 'return', 'returned', reason.trim().slice(0, 1000), async (tx) => {
		const [prof] = run ? await tx.select().from(gateProfile).where(eq(gateProfile.id, run.gateProfileId)).limit(1) : [];
		await tx.insert(decision).values({
			revisionId: ctx.rev.id,
			kind: 'return',
			byId: u.id,
			reason: reason.trim(),
			fileSha256: ctx.rev.sha256,
			reportSha256: run?.reportSha256 ?? null,
			gateProfileId: prof?.id ?? null,
			gateProfileVersion: prof?.version ?? null
		});
		await notifyReturned(tx, ref(ctx), u.name, reason.trim());
	});
}

/** Who last touched the file: the uploader, or for a repair the engineer who ran it. */
export function fourEyesConflict(u: SessionUser, ctx: Ctx): string | null {
	if (ctx.rev.uploaderId === u.id) {
		return ctx.rev.source === 'repair' ? 'You ran this repair; a different reviewer must sign it off.' : 'You uploaded this revision; a different reviewer must sign it off.';
	}
	return null;
}

export async function signOff(db: Db, u: SessionUser, ctx: Ctx, note: string | null, override: OverrideInput | null = null): Promise<number> {
	assertCan(u, 'sign-off');
	const conflict = fourEyesConflict(u, ctx);
	if (conflict) throw new HttpError(403, conflict);
	const run = await latestCheck(db, ctx.rev.id);
	if (!run) throw new HttpError(409, 'This revision has no finished check to sign off.');
	const [runProf] = await db.select().from(gateProfile).where(eq(gateProfile.id, run.gateProfileId)).limit(1);
	const guard = repairSignOffGuard(ctx.rev, run.failedRules, runProf?.rules, ctx.project, override);
	let decisionId = 0;
	await transition(db, u, ctx, guard.allowHeld && ctx.rev.status === 'held' ? 'sign-off-override' : 'sign-off', 'signed-off', null, async (tx) => {
		const [prof] = await tx.select().from(gateProfile).where(eq(gateProfile.id, run.gateProfileId)).limit(1);
		const [d] = await tx
			.insert(decision)
			.values({ revisionId: ctx.rev.id, kind: 'sign-off', byId: u.id, reason: note?.trim() || null, fileSha256: ctx.rev.sha256, reportSha256: run.reportSha256, gateProfileId: prof.id, gateProfileVersion: prof.version, overrideReason: guard.overrideReason })
			.$returningId();
		decisionId = d.id;
		await notifySignedOff(tx, ref(ctx), u.name);
	});
	return decisionId;
}

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
	return n;
}

export async function recheck(db: Db, u: SessionUser, ctx: Ctx): Promise<void> {
	assertCan(u, 'recheck');
	await transition(db, u, ctx, 'recheck', 'recheck-requested', null, async (tx) => {
		await enqueueCheck(tx, ctx.rev.id, config.checkAttempts);
	});
}
