// The clearance record of a signed-off revision: what was cleared, against which rules, by whom.
import { and, eq } from 'drizzle-orm';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { decision, user } from './db/schema';
import { HttpError, loadRevisionForUser } from './revisions';

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
	if (!row) throw new HttpError(404, 'This revision has not been signed off, so it has no clearance record.');
	const [uploader] = await db.select({ name: user.name }).from(user).where(eq(user.id, ctx.rev.uploaderId)).limit(1);
	return {
		kind: 'shellgate-clearance',
		version: 1,
		clearanceId: row.d.id,
		project: { slug: ctx.project.slug, name: ctx.project.name, units: ctx.project.units },
		part: { slug: ctx.part.slug, name: ctx.part.name },
		revision: { id: ctx.rev.id, number: ctx.rev.number, fileName: ctx.rev.fileName, size: ctx.rev.size, source: ctx.rev.source, uploadedBy: uploader?.name ?? null },
		fileSha256: row.d.fileSha256,
		reportSha256: row.d.reportSha256,
		gateProfileVersion: row.d.gateProfileVersion,
		signedOffBy: { name: row.by, email: row.byEmail },
		signedOffAt: row.d.createdAt.toISOString(),
		note: row.d.reason,
		override: row.d.overrideReason ? { reason: row.d.overrideReason } : null,
		caution: CLEARANCE_CAUTION
	};
}
