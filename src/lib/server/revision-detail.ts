// Everything shown about one revision: used by the revision page and GET /api/v1/revisions/{id}.
import { repairJudgement } from './repair-limits';
import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import { gateRulesSchema, repairLimitsOf } from '../gate/profile';
import { scaleFix } from '../gate/rules';
import { fmtPercent } from '../format';
import type { InspectionReport } from '../mesh/report';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { checkRun, decision, gateProfile, job, revision, ruleResult, user } from './db/schema';
import { listComments } from './comments';
import { loadRevisionForUser } from './revisions';

export async function revisionDetail(db: Db, u: SessionUser, id: number, opts: { withReport?: boolean } = {}) {
	const ctx = await loadRevisionForUser(db, u, id);
	const { rev } = ctx;
	const withReport = opts.withReport !== false;
	// The report column is the large one (tens to hundreds of KB): read only when asked for.
	const runColumns = {
		id: checkRun.id,
		createdAt: checkRun.createdAt,
		reportSha256: checkRun.reportSha256,
		engineVersion: checkRun.engineVersion,
		durationMs: checkRun.durationMs,
		severity: checkRun.severity,
		gateProfileId: checkRun.gateProfileId,
		failedRules: checkRun.failedRules
	};
	// Everything below depends only on the revision row, so the queries go out together.
	const newestId = ctx.part.latestRevisionId;
	const [runRows, activeJobs, decisions, uploaders, assignees, comments, repairJobRows, parent, newest] = await Promise.all([
		withReport
			? db.select({ ...runColumns, report: checkRun.report }).from(checkRun).where(eq(checkRun.revisionId, id)).orderBy(desc(checkRun.id)).limit(1)
			: db.select(runColumns).from(checkRun).where(eq(checkRun.revisionId, id)).orderBy(desc(checkRun.id)).limit(1),
		db
			.select({ status: job.status, stage: job.stage, percent: job.percent, attempts: job.attempts, maxAttempts: job.maxAttempts, lastError: job.lastError })
			.from(job)
			.where(and(eq(job.revisionId, id), eq(job.kind, 'check'), inArray(job.status, ['queued', 'running'])))
			.orderBy(desc(job.id))
			.limit(1),
		db
			.select({ d: decision, by: user.name })
			.from(decision)
			.innerJoin(user, eq(user.id, decision.byId))
			.where(eq(decision.revisionId, id))
			.orderBy(asc(decision.id)),
		db.select({ name: user.name, email: user.email }).from(user).where(eq(user.id, rev.uploaderId)).limit(1),
		rev.assigneeId ? db.select({ id: user.id, name: user.name }).from(user).where(eq(user.id, rev.assigneeId)).limit(1) : Promise.resolve([]),
		listComments(db, id),
		db
			.select({ id: job.id, status: job.status, stage: job.stage, percent: job.percent, lastError: job.lastError, payload: job.payload, createdAt: job.createdAt })
			.from(job)
			.where(and(eq(job.revisionId, id), eq(job.kind, 'repair')))
			.orderBy(desc(job.id))
			.limit(5),
		rev.parentRevisionId ? parentSummary(db, rev.parentRevisionId, withReport) : Promise.resolve(null),
		newestId !== null && newestId !== rev.id ? db.select({ id: revision.id, number: revision.number }).from(revision).where(eq(revision.id, newestId)).limit(1) : Promise.resolve([])
	]);
	const run = runRows[0] as (typeof runRows)[number] & { report?: string };
	const [[rules, [profile]], [current]] = await Promise.all([
		run
			? Promise.all([
					db.select().from(ruleResult).where(eq(ruleResult.checkRunId, run.id)).orderBy(asc(ruleResult.id)),
					db.select({ version: gateProfile.version, rules: gateProfile.rules }).from(gateProfile).where(eq(gateProfile.id, run.gateProfileId)).limit(1)
				])
			: Promise.resolve([[], []] as const),
		db.select({ v: sql<number | null>`max(${gateProfile.version})` }).from(gateProfile).where(eq(gateProfile.projectId, ctx.project.id))
	]);
	const report = run?.report !== undefined ? (JSON.parse(run.report) as InspectionReport) : null;
	const parsedRules = profile ? gateRulesSchema.safeParse(profile.rules) : null;
	// The rescale a unit mistake calls for, offered as a one-click repair on a held revision.
	const unitFix = report && parsedRules?.success ? scaleFix(report, parsedRules.data, { units: ctx.project.units, targetCellSize: ctx.project.targetCellSize }) : null;
	const [activeJob] = activeJobs;
	const limitsJudged = run ? repairJudgement(rev, profile?.rules, ctx.project) : null;
	const [uploader] = uploaders;
	const [assignee] = assignees;
	return {
		id: rev.id,
		number: rev.number,
		status: rev.status,
		statusReason: rev.statusReason,
		fileName: rev.fileName,
		format: rev.format,
		size: rev.size,
		sha256: rev.sha256,
		source: rev.source,
		parentRevisionId: rev.parentRevisionId,
		recipe: rev.recipe,
		repairLog: rev.repairLog,
		note: rev.note,
		createdAt: rev.createdAt,
		uploader: { id: rev.uploaderId, name: uploader?.name ?? '?' },
		assignee: assignee ?? null,
		part: { id: ctx.part.id, slug: ctx.part.slug, name: ctx.part.name },
		/** The part's newer revision that replaces this one (the queue shows only the newest by default); null when this is the newest. */
		supersededBy: newest[0] && newest[0].number > rev.number ? newest[0] : null,
		project: {
			id: ctx.project.id,
			slug: ctx.project.slug,
			name: ctx.project.name,
			units: ctx.project.units,
			flowDirection: [ctx.project.flowX, ctx.project.flowY, ctx.project.flowZ] as [number, number, number],
			targetCellSize: ctx.project.targetCellSize
		},
		progress: activeJob ?? null,
		check: run
			? {
					id: run.id,
					at: run.createdAt,
					reportSha256: run.reportSha256,
					engineVersion: run.engineVersion,
					durationMs: run.durationMs,
					gateProfileVersion: profile?.version ?? null,
					/** The project's newest gate profile version: a verdict under an older one may be out of date. */
					currentProfileVersion: current?.v === null || current?.v === undefined ? null : Number(current.v),
					severity: run.severity
				}
			: null,
		report,
		unitFix,
		rules: rules.map((r) => ({ rule: r.rule, passed: r.passed, severity: r.severity, measured: r.measured, limit: r.limitText, explanation: r.explanation, location: r.location })),
		decisions: decisions.map(({ d, by }) => ({
			id: d.id,
			kind: d.kind,
			by,
			at: d.createdAt,
			reason: d.reason,
			fileSha256: d.fileSha256,
			reportSha256: d.reportSha256,
			gateProfileVersion: d.gateProfileVersion,
			overrideReason: d.overrideReason
		})),
		comments,
		repairJobs: repairJobRows.map((j) => {
			const p = (j.payload ?? {}) as { recipeName?: string; resultRevisionId?: number; nothingToChange?: string; skipped?: string[] };
			return {
				id: j.id,
				status: j.status,
				stage: j.stage,
				percent: j.percent,
				lastError: j.lastError,
				recipeName: p.recipeName ?? 'recipe',
				resultRevisionId: p.resultRevisionId ?? null,
				nothingToChange: p.nothingToChange ?? null,
				skipped: p.skipped ?? [],
				createdAt: j.createdAt
			};
		}),
		parent,
		/** Largest surface deviation a repair may introduce, from the repair limits of the profile it was checked under (project units). */
		repairTolerance: (() => {
			const dev = repairLimitsOf(profile?.rules).maxDeviation;
			return dev.mode === 'absolute' ? dev.value : dev.value * ctx.project.targetCellSize;
		})(),
		/** A repair's change measures against the repair limits of the profile it was checked under (null for uploads). */
		repairLimits: limitsJudged,
		/** Held only for being outside the repair limits: a reviewer may sign off with an override. */
		overridable: rev.status === 'held' && !!run && run.failedRules === '' && limitsJudged?.within === false
	};
}

/** The parent's latest report (when reports are asked for), for the before/after comparison of a repair. */
async function parentSummary(db: Db, parentId: number, withReport: boolean) {
	const [[p], [run]] = await Promise.all([
		db.select({ id: revision.id, number: revision.number, status: revision.status }).from(revision).where(eq(revision.id, parentId)).limit(1),
		withReport ? db.select({ report: checkRun.report }).from(checkRun).where(eq(checkRun.revisionId, parentId)).orderBy(desc(checkRun.id)).limit(1) : Promise.resolve([])
	]);
	if (!p) return null;
	return { ...p, report: run ? (JSON.parse(run.report) as InspectionReport) : null };
}

export type RevisionDetail = Awaited<ReturnType<typeof revisionDetail>>;

/** The part's revisions with the summary numbers that matter when comparing them. */
/**
 * Iterations of a run arrive in any order, so their revision numbers follow arrival: the revisions of
 * one run that carry an iteration are put in iteration order, in the places those revisions hold in
 * number order (other revisions stay where they are), so the changes compare consecutive iterations.
 */
export function inIterationOrder<T extends { runId: number | null; iteration: number | null; number: number }>(revs: T[]): T[] {
	const byRun = new Map<number, number[]>();
	revs.forEach((r, i) => {
		if (r.runId !== null && r.iteration !== null) byRun.set(r.runId, [...(byRun.get(r.runId) ?? []), i]);
	});
	for (const slots of byRun.values()) {
		const sorted = slots.map((i) => revs[i]).sort((a, b) => a.iteration! - b.iteration! || a.number - b.number);
		slots.forEach((slot, k) => (revs[slot] = sorted[k]));
	}
	return revs;
}

export async function partHistory(db: Db, partId: number) {
	const revs = await db
		.select({ id: revision.id, number: revision.number, status: revision.status, source: revision.source, createdAt: revision.createdAt, fileName: revision.fileName, parent: revision.parentRevisionId, runId: revision.runId, iteration: revision.iteration })
		.from(revision)
		.where(eq(revision.partId, partId))
		.orderBy(asc(revision.number));
	inIterationOrder(revs);
	const runs = revs.length
		? await db
				.select({ revisionId: checkRun.revisionId, id: checkRun.id, genus: checkRun.genus, shells: checkRun.shells, volume: checkRun.volume, faces: checkRun.faces, watertight: checkRun.watertight })
				.from(checkRun)
				.where(inArray(checkRun.revisionId, revs.map((r) => r.id)))
				.orderBy(asc(checkRun.id))
		: [];
	const last = new Map<number, (typeof runs)[number]>();
	for (const r of runs) last.set(r.revisionId, r);
	let prev: (typeof runs)[number] | undefined;
	return revs.map((r) => {
		const run = last.get(r.id);
		const changes: string[] = [];
		if (run && prev) {
			if (run.genus !== prev.genus) changes.push(`genus ${prev.genus ?? 'undefined'} → ${run.genus ?? 'undefined'}`);
			if (run.shells !== prev.shells) changes.push(`shells ${prev.shells} → ${run.shells}`);
			const dv = prev.volume !== 0 ? (run.volume - prev.volume) / Math.abs(prev.volume) : 0;
			if (Math.abs(dv) > 0.01) changes.push(`volume ${fmtPercent(dv, { signed: true })}`);
		}
		if (run) prev = run;
		return { ...r, genus: run?.genus ?? null, shells: run?.shells ?? null, volume: run?.volume ?? null, faces: run?.faces ?? null, changes };
	});
}
