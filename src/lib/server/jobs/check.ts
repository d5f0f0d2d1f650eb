// One check job: fetch the stored file, run the engine in a long-lived worker thread under a time
// and memory cap, evaluate the project's gate profile, and write everything in one transaction.
import { createHash } from 'node:crypto';
import { and, desc, eq, lt, ne } from 'drizzle-orm';
import type { InspectionReport } from '../../mesh/report';
import { gateRulesSchema } from '../../gate/profile';
import { blockingFailures, evaluateGate, gatePasses, minEdgeThreshold, RULE_TITLES, severityScore } from '../../gate/rules';
import { config } from '../config';
import type { Db } from '../db';
import { checkRun, gateProfile, revision, ruleResult, run } from '../db/schema';
import { loadRevisionContext } from '../revisions';
import { applyEvent } from '../revision-events';
import { getStore } from '../storage';
import type { EngineTask, PreviousIteration } from './engine-thread';
import { EnginePool, EngineRefused as CheckRefused, type EngineLimits as CheckLimits } from './engine-pool';
import { failAttempt, finishJob, heartbeat, lockOwnJob, type ClaimedJob } from './queue';
import { failureReason, storedFileMissing } from '../reasons';
import { repairJudgement } from '../repair-limits';
import { DEFAULT_THIN_CELLS } from '../../mesh/thickness';

export { CheckRefused, type CheckLimits };

let engines: EnginePool | null = null;

/**
 * Runs one engine task in a long-lived engine thread (engine-pool.ts); rejects on timeout, crash,
 * cancellation or memory cap, and with CheckRefused when the engine refused the input.
 */
export function runEngine<T>(input: EngineTask, limits: CheckLimits, onProgress: (stage: string, percent: number) => void, signal?: AbortSignal): Promise<T> {
	return enginePool().then((pool) => pool.run<T>(input, limits, onProgress, signal));
}

function enginePool(): Promise<EnginePool> {
	// Imported dynamically so the bundler gives the thread's code a chunk of its own, whose URL the
	// worker then loads (the module reports it as ENGINE_THREAD_URL).
	return import('./engine-thread').then(({ ENGINE_THREAD_URL, ENGINE_THREAD_TAG }) => {
		engines ??= new EnginePool({
			url: ENGINE_THREAD_URL,
			tag: ENGINE_THREAD_TAG,
			niceness: config.engineNiceness,
			// One per check loop, and one for repairs and exports asked for from the web.
			maxIdle: config.checkWorkers + 1,
			idleMs: config.engineIdleMs,
			keepWarm: Math.max(1, config.checkWorkers),
			warmThreads: config.checkThreads
		});
		return engines;
	});
}

/** Starts the engine threads the check loops use and warms them (at server or worker start). */
export async function warmEngineThreads(): Promise<void> {
	const pool = await enginePool();
	await pool.warm(config.checkMemoryLimitMb);
}

/** Ends the idle engine threads (at shutdown). */
export async function closeEngineThreads(): Promise<void> {
	await engines?.close();
}

export function reportHash(reportJson: string): string {
	return createHash('sha256').update(reportJson).digest('hex');
}

/** What a check of one revision is judged under: the revision, its project and the project's newest gate profile. */
export async function loadCheckSetup(db: Db, revisionId: number) {
	const ctx = await loadRevisionContext(db, revisionId);
	if (!ctx) return null;
	const [profile] = await db.select().from(gateProfile).where(eq(gateProfile.projectId, ctx.project.id)).orderBy(desc(gateProfile.version)).limit(1);
	const rules = gateRulesSchema.parse(profile.rules);
	const gctx = { units: ctx.project.units, targetCellSize: ctx.project.targetCellSize };
	return { ctx, profile, rules, gctx };
}
export type CheckSetup = NonNullable<Awaited<ReturnType<typeof loadCheckSetup>>>;

/**
 * For a revision of an iterations run with an iteration number: the same part's revision of the run
 * with the highest lower iteration, and its bytes, for the shape distance. Files that arrive out of
 * order are measured against the iteration before them that is there at check time (the report
 * names it). Undefined otherwise, or when its bytes are gone.
 */
async function previousIteration(db: Db, rev: { id: number; partId: number; runId: number | null; iteration: number | null }): Promise<PreviousIteration | undefined> {
	if (rev.runId === null || rev.iteration === null) return undefined;
	const [prev] = await db
		.select({ id: revision.id, iteration: revision.iteration, sha256: revision.sha256, fileName: revision.fileName })
		.from(revision)
		.innerJoin(run, eq(run.id, revision.runId))
		.where(and(eq(revision.runId, rev.runId), eq(run.kind, 'iterations'), eq(revision.partId, rev.partId), lt(revision.iteration, rev.iteration), ne(revision.id, rev.id)))
		.orderBy(desc(revision.iteration), desc(revision.id))
		.limit(1);
	if (!prev) return undefined;
	try {
		return { revisionId: prev.id, iteration: prev.iteration, bytes: await getStore().read(prev.sha256), fileName: prev.fileName };
	} catch {
		return undefined;
	}
}

/**
 * Processes one claimed job end to end; never throws. A file the engine refused ends unreadable; a
 * missing stored file, or a check that ran out of attempts (time limit, crash), ends check-incomplete.
 */
export async function processCheckJob(db: Db, j: ClaimedJob, workerId: string, limits: CheckLimits, signal?: AbortSignal): Promise<'done' | 'refused' | 'failed' | 'lost'> {
	const setup = await loadCheckSetup(db, j.revisionId);
	if (!setup) {
		await failAttempt(db, j.id, workerId, 'The revision no longer exists.', 'incomplete');
		return 'refused';
	}
	const { ctx, rules, gctx } = setup;

	let lastBeat = 0;
	let lost = false;
	const beat = (stage: string, percent: number) => {
		const t = Date.now();
		if (t - lastBeat < 1000 && percent < 100) return;
		lastBeat = t;
		void heartbeat(db, j.id, workerId, stage, percent).then((ok) => (lost ||= !ok), () => {});
	};
	let report: InspectionReport;
	try {
		beat('fetching file', 2);
		const bytes = await getStore().read(ctx.rev.sha256);
		const previous = await previousIteration(db, ctx.rev);
		report = await runEngine<InspectionReport>(
			{
				task: 'check',
				bytes,
				previous,
				fileName: ctx.rev.fileName,
				options: {
					flowDirection: [ctx.project.flowX, ctx.project.flowY, ctx.project.flowZ],
					minEdgeLength: minEdgeThreshold(rules, gctx) ?? 0,
					// Walls, gaps and edges against the cell size are measured on every check; the
					// rule (minWallGapCells) decides whether they hold the revision.
					cellSize: ctx.project.targetCellSize,
					thinCells: rules.minWallGapCells ?? DEFAULT_THIN_CELLS,
					maxFaces: config.maxFaces,
					fileName: ctx.rev.fileName,
					units: ctx.project.units
				},
				threads: config.checkThreads
			},
			limits,
			beat,
			signal
		);
	} catch (e) {
		const refused = e instanceof CheckRefused;
		await failAttempt(db, j.id, workerId, failureReason(e), refused ? 'unreadable' : storedFileMissing(e) ? 'incomplete' : 'retry');
		return refused ? 'refused' : 'failed';
	}
	if (lost) return 'lost';
	return (await writeCheckResult(db, j, workerId, setup, report)) ? 'done' : 'lost';
}

const finiteOrNull = (x: number | undefined) => (x !== undefined && Number.isFinite(x) ? x : null);

/**
 * Evaluates the gate on a finished report and writes the check run, its rule results and the
 * revision's new status in one transaction. False when the job's lease was lost meanwhile.
 */
export async function writeCheckResult(db: Db, j: ClaimedJob, workerId: string, setup: CheckSetup, report: InspectionReport): Promise<boolean> {
	const { ctx, profile, rules, gctx } = setup;
	const outcomes = evaluateGate(report, rules, gctx);
	const passes = gatePasses(outcomes);
	const reportJson = JSON.stringify(report);
	const limitsOut = passes ? repairJudgement(ctx.rev, rules, ctx.project) : null;
	const next = passes ? (ctx.rev.source === 'repair' ? (limitsOut && !limitsOut.within ? 'held' : 'repair-proposed') : 'clear') : 'held';
	const failed = blockingFailures(outcomes);
	const written = await db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		if (!(await lockOwnJob(tx, j.id, workerId))) return false;
		const [run] = await tx
			.insert(checkRun)
			.values({
				revisionId: ctx.rev.id,
				gateProfileId: profile.id,
				report: reportJson,
				reportSha256: reportHash(reportJson),
				engineVersion: report.engineVersion,
				faces: report.faces,
				vertices: report.vertices,
				shells: report.components,
				boundaryEdges: report.boundaryEdges,
				nonManifoldEdges: report.nonManifoldEdges,
				selfIntersectingPairs: report.selfIntersectingPairs ?? -1,
				genus: report.genus,
				// The column is NOT NULL: an undefined volume (open / non-manifold / inconsistent surface) is stored as 0.
				volume: report.volume ?? 0,
				watertight: report.watertight,
				severity: severityScore(outcomes),
				failedRules: failed.length ? `,${failed.map((o) => o.rule).join(',')},` : '',
				// In cells of the project's target cell size as it was at check time (the report's own
				// figure), so the queue agrees with the report; a later cell-size change shows after a re-check.
				thinnestWallCells: finiteOrNull(report.cellSizeChecks?.thinnestWall?.cells),
				narrowestGapCells: finiteOrNull(report.cellSizeChecks?.narrowestGap?.cells),
				// Copied for the run page, which draws them for every revision of a run without reading reports.
				wettedArea: finiteOrNull(report.wettedArea ?? undefined),
				frontalArea: finiteOrNull(report.projectedArea?.flow?.area),
				shortestEdgeCells: report.cellSizeChecks?.cellSize ? finiteOrNull(report.minEdgeLength / report.cellSizeChecks.cellSize) : null,
				iterationHausdorff: finiteOrNull(report.iterationDistance?.hausdorff ?? undefined),
				iterationChamfer: finiteOrNull(report.iterationDistance?.chamfer ?? undefined),
				previousIteration: report.iterationDistance?.previousIteration ?? null,
				durationMs: Math.round(report.timings.total ?? Object.values(report.timings).reduce((a, b) => a + b, 0))
			})
			.$returningId();
		await tx.insert(ruleResult).values(
			outcomes.map((o) => ({
				checkRunId: run.id,
				rule: o.rule,
				passed: o.passed,
				severity: o.severity,
				measured: o.measured.slice(0, 120),
				limitText: o.limit.slice(0, 120),
				explanation: o.explanation,
				location: o.location
			}))
		);
		const event = next === 'held' ? 'check-held' : next === 'repair-proposed' ? 'repair-proposed' : 'check-passed';
		await applyEvent(tx, ctx.rev.id, event, {
			actor: null,
			reason: passes ? (next === 'held' ? limitsOut!.reason : null) : failed.map((o) => RULE_TITLES[o.rule]).join('; '),
			latestCheckId: run.id,
			detail: { checkRun: run.id, failed: failed.map((o) => o.rule), profileVersion: profile.version },
			heldReasons: passes
				? [limitsOut?.reason ?? '']
				: [
						...failed.map((o) => `${RULE_TITLES[o.rule]}: ${o.measured}. ${o.explanation}`),
						// A unit mistake the project's rules do not hold on still heads the designer's fix list.
						...outcomes.filter((o) => !o.passed && o.severity === 'warning' && o.rule === 'expected-size').map((o) => `Also to look at (does not hold on its own) — ${RULE_TITLES[o.rule]}: ${o.measured}. ${o.explanation}`)
					]
		});
		await finishJob(tx, j.id);
		return true;
	});
	return written;
}
