// Who is told what by e-mail. Each function queues mail inside the caller's transaction.
import { and, eq } from 'drizzle-orm';
import { config } from './config';
import type { Db } from './db';
import { revision, user, userRole } from './db/schema';
import { queueMail, simpleMail } from './mail';

type Tx = Db;

export interface RevisionRef {
	id: number;
	number: number;
	partName: string;
	projectName: string;
	uploaderId: string;
}

const link = (id: number) => ({ href: `${config.origin}/revisions/${id}`, label: 'Open the revision in Shellgate' });
const title = (r: RevisionRef) => `${r.partName} rev ${r.number} (${r.projectName})`;

async function person(tx: Tx, id: string) {
	const [u] = await tx.select({ email: user.email, name: user.name }).from(user).where(eq(user.id, id)).limit(1);
	return u;
}

export async function notifyHeld(tx: Tx, r: RevisionRef, reasons: string[]): Promise<void> {
	const u = await person(tx, r.uploaderId);
	if (!u) return;
	await queueMail(
		tx,
		simpleMail(u.email, `Held: ${title(r)}`, [
			`Hello ${u.name},`,
			`${title(r)} did not pass the solver-readiness gate and is held back. What to change:`,
			...reasons.map((x) => `• ${x}`)
		], link(r.id))
	);
}

export async function notifyReturned(tx: Tx, r: RevisionRef, by: string, reason: string): Promise<void> {
	const u = await person(tx, r.uploaderId);
	if (!u) return;
	await queueMail(tx, simpleMail(u.email, `Returned to you: ${title(r)}`, [`Hello ${u.name},`, `${by} returned ${title(r)} to you with this reason:`, reason], link(r.id)));
}

export async function notifyRepairAwaits(tx: Tx, r: RevisionRef, teamId: number, excludeUserId: string): Promise<void> {
	const reviewers = await tx
		.select({ id: user.id, email: user.email, name: user.name })
		.from(user)
		.innerJoin(userRole, eq(userRole.userId, user.id))
		.where(and(eq(userRole.role, 'reviewer'), eq(user.teamId, teamId), eq(user.disabled, false)));
	for (const rv of reviewers) {
		if (rv.id === excludeUserId) continue;
		await queueMail(tx, simpleMail(rv.email, `Repair awaits your sign-off: ${title(r)}`, [`Hello ${rv.name},`, `A repaired revision, ${title(r)}, passed the gate and waits for a reviewer's sign-off.`], link(r.id)));
	}
}

/**
 * The revision a repair (or a repair of a repair) started from: the designer's own upload, whose
 * uploader has not been told anything by a sign-off on the repair otherwise.
 */
async function originalOf(tx: Tx, revisionId: number): Promise<{ id: number; number: number; uploaderId: string } | null> {
	let id: number | null = revisionId;
	let row: { id: number; number: number; uploaderId: string; source: string; parentRevisionId: number | null } | undefined;
	for (let depth = 0; id !== null && depth < 50; depth++) {
		[row] = await tx
			.select({ id: revision.id, number: revision.number, uploaderId: revision.uploaderId, source: revision.source, parentRevisionId: revision.parentRevisionId })
			.from(revision)
			.where(eq(revision.id, id))
			.limit(1);
		if (!row) return null;
		if (row.source !== 'repair' || row.parentRevisionId === null) return row;
		id = row.parentRevisionId;
	}
	return null;
}

export async function notifySignedOff(tx: Tx, r: RevisionRef, by: string): Promise<void> {
	const u = await person(tx, r.uploaderId);
	const caution = 'A clearance says the surface is fit for meshing and solving; it is not a structural or safety approval.';
	if (u) {
		await queueMail(
			tx,
			simpleMail(u.email, `Signed off: ${title(r)}`, [
				`Hello ${u.name},`,
				`${by} signed off ${title(r)} for the CFD solver. The clearance record holds the file's and the report's hashes.`,
				caution
			], link(r.id))
		);
	}
	// A repaired revision: the designer who uploaded the original hears that the repair went through.
	const orig = await originalOf(tx, r.id);
	if (!orig || orig.id === r.id || orig.uploaderId === r.uploaderId) return;
	const d = await person(tx, orig.uploaderId);
	if (!d) return;
	await queueMail(
		tx,
		simpleMail(d.email, `Repair of your upload signed off: ${title(r)}`, [
			`Hello ${d.name},`,
			`${by} signed off ${title(r)} for the CFD solver. It is a repair of your rev ${orig.number}, made in Shellgate; the repaired file is what goes to the solver.`,
			'The revision page shows what the repair changed. If the same defects come out of your generator again, the notes on rev ' + orig.number + ' say what to change upstream.',
			caution
		], link(r.id))
	);
}
