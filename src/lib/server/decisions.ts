// The decisions people make on a revision: return it to the designer, sign it off (with the
// four-eyes rule and the repair-limit override), or queue it for a fresh check. Each is one event
// through applyEvent, with its decision row or job in the same transaction.
import { eq } from 'drizzle-orm';
import type { SessionUser } from './auth';
import { config } from './config';
import type { Db } from './db';
import { decision, gateProfile } from './db/schema';
import { enqueueCheck } from './jobs/queue';
import { jobsQueued } from './jobs/wake';
import { repairSignOffGuard, type OverrideInput } from './repair-limits';
import { applyEvent } from './revision-events';
import { assertCan, latestCheck, type RevisionContext } from './revisions';
import { DomainError } from '../domain-error';

export async function returnRevision(db: Db, u: SessionUser, ctx: RevisionContext, reason: string): Promise<void> {
	assertCan(u, 'return');
	if (!reason.trim()) throw new DomainError('invalid', 'Say why the revision goes back, so the designer knows what to change.');
	const run = await latestCheck(db, ctx.rev.id);
	await applyEvent(db, ctx.rev.id, 'return', {
		actor: u,
		reason: reason.trim().slice(0, 1000),
		after: async (tx) => {
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
		}
	});
}

/** Who last touched the file: the uploader, or for a repair the engineer who ran it. */
export function fourEyesConflict(u: SessionUser, ctx: RevisionContext): string | null {
	if (ctx.rev.uploaderId === u.id) {
		return ctx.rev.source === 'repair' ? 'You ran this repair; a different reviewer must sign it off.' : 'You uploaded this revision; a different reviewer must sign it off.';
	}
	return null;
}

export async function signOff(db: Db, u: SessionUser, ctx: RevisionContext, note: string | null, override: OverrideInput | null = null): Promise<number> {
	assertCan(u, 'sign-off');
	const conflict = fourEyesConflict(u, ctx);
	if (conflict) throw new DomainError('forbidden', conflict);
	const run = await latestCheck(db, ctx.rev.id);
	if (!run) throw new DomainError('conflict', 'This revision has no finished check to sign off.');
	const [runProf] = await db.select().from(gateProfile).where(eq(gateProfile.id, run.gateProfileId)).limit(1);
	const guard = repairSignOffGuard(ctx.rev, run.failedRules, runProf?.rules, ctx.project, override);
	let decisionId = 0;
	await applyEvent(db, ctx.rev.id, guard.allowHeld && ctx.rev.status === 'held' ? 'sign-off-override' : 'sign-off', {
		actor: u,
		after: async (tx) => {
			const [prof] = await tx.select().from(gateProfile).where(eq(gateProfile.id, run.gateProfileId)).limit(1);
			const [d] = await tx
				.insert(decision)
				.values({ revisionId: ctx.rev.id, kind: 'sign-off', byId: u.id, reason: note?.trim() || null, fileSha256: ctx.rev.sha256, reportSha256: run.reportSha256, gateProfileId: prof.id, gateProfileVersion: prof.version, overrideReason: guard.overrideReason })
				.$returningId();
			decisionId = d.id;
		}
	});
	return decisionId;
}

export async function recheck(db: Db, u: SessionUser, ctx: RevisionContext): Promise<void> {
	assertCan(u, 'recheck');
	await applyEvent(db, ctx.rev.id, 'recheck', { actor: u, after: (tx) => enqueueCheck(tx, ctx.rev.id, config.checkAttempts) });
	jobsQueued();
}
