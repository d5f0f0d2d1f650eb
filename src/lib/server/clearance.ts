// The clearance record of a signed-off revision: what was cleared, against which rules, by whom.
import { and, desc, eq } from 'drizzle-orm';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { decision, gateProfile, revision, user } from './db/schema';
import { repairJudgement } from './repair-limits';
import { loadRevisionForUser } from './revisions';
import { DomainError } from '../domain-error';

export const CLEARANCE_CAUTION =
	'This clearance says that the surface mesh met the project gate for CFD meshing and solving. It is not a structural, hydrostatic or safety approval: follow your team’s own procedures before using the shape or any result for such decisions.';

export async function clearanceRecord(db: Db, u: SessionUser, revisionId: number) {
	const ctx = await loadRevisionForUser(db, u, revisionId);
	const [row] = await db
		.select({ d: decision, by: user.name, byEmail: user.email })
		.from(decision)
		.innerJoin(user, eq(user.id, decision.byId))
		.where(and(eq(decision.revisionId, revisionId), eq(decision.kind, 'sign-off')))
		.limit(1);
	if (!row) throw new DomainError('not-found', 'This revision has not been signed off, so it has no clearance record.');
	const [uploader] = await db.select({ name: user.name }).from(user).where(eq(user.id, ctx.rev.uploaderId)).limit(1);
	const [checkedProfile] = row.d.gateProfileId ? await db.select().from(gateProfile).where(eq(gateProfile.id, row.d.gateProfileId)).limit(1) : [];
	const [newest] = await db.select({ version: gateProfile.version }).from(gateProfile).where(eq(gateProfile.projectId, ctx.project.id)).orderBy(desc(gateProfile.version)).limit(1);
	// The project's newest version when the sign-off was made (versions created later do not count).
	const versions = await db.select({ version: gateProfile.version, createdAt: gateProfile.createdAt }).from(gateProfile).where(eq(gateProfile.projectId, ctx.project.id));
	const projectVersionAtSignOff = Math.max(0, ...versions.filter((v) => v.createdAt <= row.d.createdAt).map((v) => v.version)) || (newest?.version ?? null);
	const profileNote =
		row.d.gateProfileVersion !== null && projectVersionAtSignOff !== null && projectVersionAtSignOff > row.d.gateProfileVersion
			? `checked under profile v${row.d.gateProfileVersion}; the project was at v${projectVersionAtSignOff} at sign-off`
			: null;
	let parent = null;
	if (ctx.rev.parentRevisionId) {
		const [p] = await db
			.select({ id: revision.id, number: revision.number, fileName: revision.fileName, sha256: revision.sha256, uploadedBy: user.name })
			.from(revision)
			.innerJoin(user, eq(user.id, revision.uploaderId))
			.where(eq(revision.id, ctx.rev.parentRevisionId))
			.limit(1);
		parent = p ?? null;
	}
	const judged = repairJudgement(ctx.rev, checkedProfile?.rules, ctx.project);
	const log = ctx.rev.repairLog as { log?: unknown[]; deviation?: unknown; skipped?: string[] } | null;
	return {
		kind: 'shellgate-clearance',
		version: 1,
		clearanceId: row.d.id,
		project: { slug: ctx.project.slug, name: ctx.project.name, units: ctx.project.units, targetCellSize: ctx.project.targetCellSize },
		part: { slug: ctx.part.slug, name: ctx.part.name },
		revision: { id: ctx.rev.id, number: ctx.rev.number, fileName: ctx.rev.fileName, size: ctx.rev.size, source: ctx.rev.source, uploadedBy: uploader?.name ?? null },
		fileSha256: row.d.fileSha256,
		reportSha256: row.d.reportSha256,
		gateProfileVersion: row.d.gateProfileVersion,
		projectProfileVersionAtSignOff: projectVersionAtSignOff,
		profileNote,
		parent,
		repair:
			ctx.rev.source === 'repair'
				? {
						recipe: ctx.rev.recipe,
						steps: log?.log ?? [],
						skipped: log?.skipped ?? [],
						deviation: log?.deviation ?? null,
						limits: judged ? { within: judged.within, lines: judged.lines } : null
					}
				: null,
		signedOffBy: { name: row.by, email: row.byEmail },
		signedOffAt: row.d.createdAt.toISOString(),
		note: row.d.reason,
		override: row.d.overrideReason ? { reason: row.d.overrideReason } : null,
		caution: CLEARANCE_CAUTION
	};
}
