// The triage queue: one query behind the queue page and GET /api/v1/queue, filtered, sorted and
// paged in MariaDB on the indexed summary columns and the check run's figures (never its report).
import { and, asc, desc, eq, inArray, isNull, like, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import { z } from 'zod';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { checkRun, gateProfile, job, part, project, REVISION_STATES, revision, user } from './db/schema';
import { RULE_IDS, RULE_TITLES, type RuleId } from '../gate/rules';

/**
 * The queue's "What is wrong" text for a check run's failed_rules column: the titles of the rules
 * that hold the revision, the same list the rule filter matches on. Null when none failed.
 */
export function failedRulesSummary(failedRules: string[]): string | null {
	return failedRules.length ? failedRules.map((x) => RULE_TITLES[x as RuleId] ?? x).join(' · ') : null;
}

/** States that still need someone's action; the queue's default view. */
export const NEEDS_ACTION = ['awaiting-check', 'checking', 'held', 'clear', 'repair-proposed', 'unreadable', 'check-incomplete'] as const;

export const queueFilterSchema = z.object({
	project: z.string().max(64).optional(),
	status: z.enum([...REVISION_STATES, 'needs-action', 'all']).default('needs-action'),
	assignee: z.string().max(32).optional(),
	rule: z.enum(RULE_IDS).optional(),
	/** Only revisions whose latest check found a wall or gap thinner than this many cells. */
	thinUnder: z.coerce.number().positive().max(1_000_000).optional(),
	sort: z.enum(['age', 'severity', 'size', 'thin']).default('age'),
	dir: z.enum(['asc', 'desc']).default('desc'),
	page: z.coerce.number().int().min(1).max(100_000).default(1),
	pageSize: z.coerce.number().int().min(1).max(200).default(50)
});
export type QueueFilter = z.infer<typeof queueFilterSchema>;

export function parseQueueFilter(params: URLSearchParams): QueueFilter {
	const raw: Record<string, string> = {};
	for (const [k, v] of params) if (v !== '') raw[k] = v;
	return queueFilterSchema.parse(raw);
}

/**
 * The smaller of the latest check's thinnest wall and narrowest gap, in cells; null when neither was
 * found (or there is no check). Both columns are read from the joined check_run row, never the report.
 */
const THIN_CELLS = sql<number | null>`least(coalesce(${checkRun.thinnestWallCells}, ${checkRun.narrowestGapCells}), coalesce(${checkRun.narrowestGapCells}, ${checkRun.thinnestWallCells}))`;

/** The queue's wall/gap figure for one row: the smaller of the two and which it is. */
export function thinnestOf(wall: number | null, gap: number | null): { cells: number; which: 'wall' | 'gap' } | null {
	if (wall === null && gap === null) return null;
	if (gap === null || (wall !== null && wall <= gap)) return { cells: wall!, which: 'wall' };
	return { cells: gap, which: 'gap' };
}

/** Job states whose stage and percent the queue shows as live progress. */
const ACTIVE_JOB = sql`${job.status} in ('queued', 'running')`;

/**
 * The page of rows and the per-state counts, as two queries sent together. Each revision carries
 * its newest check run's id (revision.latest_check_id), so the check figures are one primary-key
 * join instead of a max(id) per revision over all check runs; the counts join check_run only when
 * a rule filter needs it. Live progress comes from correlated subqueries on job_revision, only
 * for rows still awaiting or under check.
 */
export async function queryQueue(db: Db, u: SessionUser, f: QueueFilter) {
	const uploader = alias(user, 'uploader');
	const assignee = alias(user, 'assignee');

	const base: SQL[] = [eq(project.teamId, u.teamId)];
	if (f.project) base.push(eq(project.slug, f.project));
	if (f.assignee === 'me') base.push(eq(revision.assigneeId, u.id));
	else if (f.assignee === 'none') base.push(isNull(revision.assigneeId));
	else if (f.assignee) base.push(eq(revision.assigneeId, f.assignee));
	if (f.rule) base.push(like(checkRun.failedRules, `%,${f.rule},%`));
	if (f.thinUnder !== undefined) base.push(sql`${THIN_CELLS} < ${f.thinUnder}`);
	const countNeedsCheck = !!f.rule || f.thinUnder !== undefined;
	const statusCond =
		f.status === 'all' ? undefined : f.status === 'needs-action' ? inArray(revision.status, [...NEEDS_ACTION]) : eq(revision.status, f.status);
	const where = and(...base, statusCond);

	const order =
		f.sort === 'severity'
			? [f.dir === 'asc' ? asc(sql`coalesce(${checkRun.severity}, -1)`) : desc(sql`coalesce(${checkRun.severity}, -1)`), desc(revision.id)]
			: f.sort === 'size'
				? [f.dir === 'asc' ? asc(revision.size) : desc(revision.size), desc(revision.id)]
				: f.sort === 'thin'
					? // Rows with no wall or gap figure go last either way.
						[asc(sql`${THIN_CELLS} is null`), f.dir === 'asc' ? asc(THIN_CELLS) : desc(THIN_CELLS), desc(revision.id)]
					: [f.dir === 'asc' ? desc(revision.createdAt) : asc(revision.createdAt), asc(revision.id)];

	const live = sql`${revision.status} in ('checking', 'awaiting-check')`;
	const activeJob = <T>(col: SQL) =>
		sql<T | null>`case when ${live} then (select ${col} from ${job} where ${job.revisionId} = ${revision.id} and ${ACTIVE_JOB} order by ${job.id} desc limit 1) end`;

	// Deferred join: the page's ids are sorted and cut on the narrow revision/part/project join
	// (check_run only when the sort or filter needs it); names and figures are joined for those rows only.
	const needsCheck = f.sort === 'severity' || f.sort === 'thin' || countNeedsCheck;
	const idsBase = db.select({ id: revision.id }).from(revision).innerJoin(part, eq(part.id, revision.partId)).innerJoin(project, eq(project.id, part.projectId));
	const pageIds = (needsCheck ? idsBase.leftJoin(checkRun, eq(checkRun.id, revision.latestCheckId)) : idsBase)
		.where(where)
		.orderBy(...order)
		.limit(f.pageSize)
		.offset((f.page - 1) * f.pageSize)
		.as('page_ids');

	const rowsQuery = db
		.select({
			id: revision.id,
			number: revision.number,
			status: revision.status,
			statusReason: revision.statusReason,
			fileName: revision.fileName,
			size: revision.size,
			source: revision.source,
			createdAt: revision.createdAt,
			partName: part.name,
			partSlug: part.slug,
			projectName: project.name,
			projectSlug: project.slug,
			uploaderName: uploader.name,
			assigneeId: revision.assigneeId,
			assigneeName: assignee.name,
			faces: checkRun.faces,
			severity: checkRun.severity,
			failedRules: checkRun.failedRules,
			boundaryEdges: checkRun.boundaryEdges,
			selfIntersectingPairs: checkRun.selfIntersectingPairs,
			shells: checkRun.shells,
			genus: checkRun.genus,
			thinnestWallCells: checkRun.thinnestWallCells,
			narrowestGapCells: checkRun.narrowestGapCells,
			// A verdict given under an older gate profile than the project's newest is marked stale.
			profileVersion: sql<number | null>`(select ${gateProfile.version} from ${gateProfile} where ${gateProfile.id} = ${checkRun.gateProfileId})`,
			currentProfileVersion: sql<number | null>`(select max(${gateProfile.version}) from ${gateProfile} where ${gateProfile.projectId} = ${project.id})`,
			jobStage: activeJob<string>(sql`${job.stage}`),
			jobPercent: activeJob<number>(sql`${job.percent}`)
		})
		.from(pageIds)
		.innerJoin(revision, eq(revision.id, pageIds.id))
		.innerJoin(part, eq(part.id, revision.partId))
		.innerJoin(project, eq(project.id, part.projectId))
		.innerJoin(uploader, eq(uploader.id, revision.uploaderId))
		.leftJoin(assignee, eq(assignee.id, revision.assigneeId))
		.leftJoin(checkRun, eq(checkRun.id, revision.latestCheckId))
		.orderBy(...order);

	const countBase = db
		.select({ status: revision.status, n: sql<number>`count(*)` })
		.from(revision)
		.innerJoin(part, eq(part.id, revision.partId))
		.innerJoin(project, eq(project.id, part.projectId));
	const countQuery = (countNeedsCheck ? countBase.leftJoin(checkRun, eq(checkRun.id, revision.latestCheckId)) : countBase).where(and(...base)).groupBy(revision.status);

	const [rows, countRows] = await Promise.all([rowsQuery, countQuery]);
	const counts = Object.fromEntries(REVISION_STATES.map((s) => [s, 0])) as Record<(typeof REVISION_STATES)[number], number>;
	for (const c of countRows) counts[c.status] = Number(c.n);
	const total =
		f.status === 'all'
			? Object.values(counts).reduce((a, b) => a + b, 0)
			: f.status === 'needs-action'
				? NEEDS_ACTION.reduce((a, s) => a + counts[s], 0)
				: counts[f.status];

	return {
		rows: rows.map(({ jobStage, jobPercent, ...r }) => {
			const failedRules = r.failedRules ? r.failedRules.split(',').filter(Boolean) : [];
			return {
				...r,
				failedRules,
				summary: failedRulesSummary(failedRules),
				thin: thinnestOf(r.thinnestWallCells, r.narrowestGapCells),
				profileVersion: r.profileVersion === null ? null : Number(r.profileVersion),
				currentProfileVersion: r.currentProfileVersion === null ? null : Number(r.currentProfileVersion),
				staleProfile: r.profileVersion !== null && r.currentProfileVersion !== null && Number(r.profileVersion) !== Number(r.currentProfileVersion) && !['signed-off', 'returned'].includes(r.status),
				progress: jobPercent === null ? null : { revisionId: r.id, stage: jobStage, percent: Number(jobPercent) }
			};
		}),
		counts,
		total,
		page: f.page,
		pageSize: f.pageSize,
		pages: Math.max(1, Math.ceil(total / f.pageSize))
	};
}

export type QueueResult = Awaited<ReturnType<typeof queryQueue>>;
