// One repair job: apply a recipe to a revision's surface in a worker thread, measure how far the
// result moved from the original, and store it as a new revision (source = repair) of the same part
// (and of the same generator run, when the original came in with one).
// The original is never changed. Deterministic: a retried job produces the same bytes, which the
// ingest recognises as a duplicate instead of storing twice.
import { Readable } from 'node:stream';
import { eq } from 'drizzle-orm';
import { loadSessionUser } from '../auth';
import { audit } from '../audit';
import { config } from '../config';
import type { Db } from '../db';
import { job } from '../db/schema';
import { ingestRevision } from '../ingest';
import { loadRevisionContext } from '../revisions';
import { getStore, spool } from '../storage';
import { CheckRefused, runEngine, type CheckLimits } from './check';
import type { RepairOutput } from './engine-thread';
import { failAttempt, finishJob, heartbeat, lockOwnJob, type ClaimedJob } from './queue';
import { failureReason, storedFileMissing } from '../reasons';
import type { RepairStep } from '../../mesh/repair';

export interface RepairPayload {
	steps: RepairStep[];
	requestedBy: string;
	recipeName: string;
}

export async function processRepairJob(db: Db, j: ClaimedJob, workerId: string, limits: CheckLimits, signal?: AbortSignal): Promise<'done' | 'refused' | 'failed' | 'lost'> {
	const payload = j.payload as RepairPayload;
	const ctx = await loadRevisionContext(db, j.revisionId);
	const engineer = ctx ? await loadSessionUser(db, payload.requestedBy) : null;
	if (!ctx || !engineer) {
		await failAttempt(db, j.id, workerId, 'The revision or the engineer who asked for the repair no longer exists.', 'incomplete');
		return 'refused';
	}
	let out: RepairOutput;
	try {
		const bytes = await getStore().read(ctx.rev.sha256);
		out = await runEngine<RepairOutput>(
			{ task: 'repair', bytes, fileName: ctx.rev.fileName, steps: payload.steps, maxFaces: config.maxFaces },
			limits,
			(stage, percent) => void heartbeat(db, j.id, workerId, stage, percent).catch(() => {}),
			signal
		);
	} catch (e) {
		const refused = e instanceof CheckRefused;
		await failAttempt(db, j.id, workerId, failureReason(e), refused ? 'unreadable' : storedFileMissing(e) ? 'incomplete' : 'retry');
		return refused ? 'refused' : 'failed';
	}
	if (!(await heartbeat(db, j.id, workerId, 'storing', 95))) return 'lost';
	if (out.unchanged) {
		// Same mesh out as in: no revision. The job says so, with what each step left alone and why.
		const nothing = `nothing to change: the ${payload.recipeName} recipe left the mesh exactly as it was${out.skipped.length ? ` (${out.skipped.join('; ')})` : ''}`.slice(0, 2000);
		await db.transaction(async (txx) => {
			const tx = txx as unknown as Db;
			if (!(await lockOwnJob(tx, j.id, workerId))) return;
			await tx.update(job).set({ payload: { ...payload, resultRevisionId: null, nothingToChange: nothing, skipped: out.skipped } }).where(eq(job.id, j.id));
			await audit(tx, engineer.id, 'revision', ctx.rev.id, 'repair-unchanged', null, null, { recipe: payload.recipeName });
			await finishJob(tx, j.id);
		});
		return 'done';
	}
	const base = ctx.rev.fileName.replace(/\.(stl|ply|obj)$/i, '');
	const spooled = await spool(Readable.from([Buffer.from(out.bytes)]), Number.MAX_SAFE_INTEGER);
	const created = await ingestRevision(db, {
		user: engineer,
		projectSlug: ctx.project.slug,
		partSlug: ctx.part.slug,
		fileName: `${base}-repaired.stl`,
		spooled,
		source: 'repair',
		parentRevisionId: ctx.rev.id,
		recipe: { name: payload.recipeName, steps: payload.steps },
		repairLog: { log: out.log, deviation: out.deviation, facesBefore: out.facesBefore, facesAfter: out.facesAfter, measures: out.measures, skipped: out.skipped },
		note: `Repair of rev ${ctx.rev.number} with the ${payload.recipeName} recipe`,
		// A repair of a generator run's revision stays in that run, at the same iteration and with the
		// generator's metadata: it shows on the run page, its verdict goes into the run's digest, and
		// once signed off it is part of the run's dataset.
		runId: ctx.rev.runId,
		iteration: ctx.rev.iteration,
		meta: ctx.rev.meta
	});
	await db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		if (!(await lockOwnJob(tx, j.id, workerId))) return;
		await tx.update(job).set({ payload: { ...payload, resultRevisionId: created.revisionId, skipped: out.skipped } }).where(eq(job.id, j.id));
		await audit(tx, engineer.id, 'revision', ctx.rev.id, 'repaired', null, null, { repairRevisionId: created.revisionId, duplicate: created.duplicateOf !== null });
		await finishJob(tx, j.id);
	});
	return 'done';
}
