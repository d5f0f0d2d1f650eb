// The triage queue: one query behind the queue page and GET /api/v1/queue, filtered, sorted and
// paged in MariaDB on the indexed summary columns and the check run's figures (never its report).
// By default it shows each part's newest revision only; an older one is superseded by it.
import { eq, inArray, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import { z } from 'zod';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { checkRun, gateProfile, job, part, project, REVISION_STATES, revision, run, user, type RevisionState } from './db/schema';
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
	/** `latest`: each part's newest revision only (older ones are superseded by it); `all`: every revision. */
	revisions: z.enum(['latest', 'all']).default('latest'),
	/** Only revisions of this generator run. */
	run: z.coerce.number().int().positive().max(2_147_483_647).optional(),
	assignee: z.string().max(32).optional(),
	rule: z.enum(RULE_IDS).optional(),
	/** Only revisions whose latest check found a wall or gap thinner than this many cells. */
	thinUnder: z.coerce.number().positive().max(1_000_000).optional(),
	sort: z.enum(['age', 'severity', 'size', 'thin', 'deviation']).default('age'),
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


/** The queue's wall/gap figure for one row: the smaller of the two and which it is. */
export function thinnestOf(wall: number | null, gap: number | null): { cells: number; which: 'wall' | 'gap' } | null {
	if (wall === null && gap === null) return null;
	if (gap === null || (wall !== null && wall <= gap)) return { cells: wall!, which: 'wall' };
	return { cells: gap, which: 'gap' };
}

/** Job states whose stage and percent the queue shows as live progress. */
const ACTIVE_JOB = sql`${job.status} in ('queued', 'running')`;

/** The smaller of a check's thinnest wall and narrowest gap, in cells, on the alias `cr`; null when neither was found. */
const THIN_CR = sql.raw('least(coalesce(cr.thinnest_wall_cells, cr.narrowest_gap_cells), coalesce(cr.narrowest_gap_cells, cr.thinnest_wall_cells))');

async function rowsOf<T>(db: Db, q: SQL): Promise<T[]> {
	const [rows] = (await db.execute(q)) as unknown as [T[]];
	return rows;
}

const list = (xs: readonly string[]) => sql.join(xs.map((x) => sql`${x}`), sql`, `);

/**
 * The page's revision ids, in order. Every plan is written with STRAIGHT_JOIN and a forced index so
 * MariaDB reads in the page's order and stops after it, instead of joining and sorting the team:
 *  - newest revisions (the default), by age: the covering index part(latest_revision_id, latest_status,
 *    project_id), or part(latest_status, latest_revision_id, project_id) for one state; no revision row
 *    is read unless a filter needs one. Revision ids are given in upload order, so id order is age order.
 *  - a run's revisions: revision(run_id, id) in order.
 *  - by severity, highest first: check_run(severity, id) in order, each joined to the revision whose latest check it is
 *    (and, for newest only, to the part whose newest revision that is); revisions with no finished check
 *    follow (or lead, ascending) from the id-ordered scan above.
 *  - every revision, by age: the revision primary key in order.
 *  - size, wall/gap, deviation and lowest severity first sort the filtered set (newest only: one row per part), from the
 *    covering index check_run_queue, never the check run's row with its report.
 */
export async function pageIds(db: Db, u: SessionUser, f: QueueFilter): Promise<number[]> {
	const latest = f.revisions === 'latest';
	const states = f.status === 'all' ? null : f.status === 'needs-action' ? [...NEEDS_ACTION] : [f.status];
	const needsCheck = !!f.rule || f.thinUnder !== undefined;
	const statusCol = sql.raw(latest ? 'p.latest_status' : 'r.status');
	const conds: SQL[] = [sql`pr.team_id = ${u.teamId}`];
	if (f.project) conds.push(sql`pr.slug = ${f.project}`);
	if (states) conds.push(sql`${statusCol} in (${list(states)})`);
	if (f.assignee === 'me') conds.push(sql`r.assignee_id = ${u.id}`);
	else if (f.assignee === 'none') conds.push(sql`r.assignee_id is null`);
	else if (f.assignee) conds.push(sql`r.assignee_id = ${f.assignee}`);
	if (f.run) conds.push(sql`r.run_id = ${f.run}`);
	if (f.rule) conds.push(sql`cr.failed_rules like ${`%,${f.rule},%`}`);
	if (f.thinUnder !== undefined) conds.push(sql`${THIN_CR} < ${f.thinUnder}`);
	const where = (extra: SQL[] = []) => sql.join([...conds, ...extra], sql` and `);
	const offset = (f.page - 1) * f.pageSize;
	const dir = sql.raw(f.dir === 'asc' ? 'asc' : 'desc');
	const cr = sql.raw('left join check_run cr force index (check_run_queue) on cr.id = r.latest_check_id');
	// A run's revisions from revision(run_id, id); otherwise from the part's newest-revision index
	// (newest only) or the revision table (all).
	const fromRevisions = (order: 'latest-order' | 'count') =>
		f.run
			? sql.raw(`revision r force index (revision_run) join part p on p.id = r.part_id${latest ? ' and p.latest_revision_id = r.id' : ''} join project pr on pr.id = p.project_id`)
			: latest
				? sql.raw(
						`part p force index (${order === 'count' ? 'part_latest_count' : states?.length === 1 ? 'part_latest_state_order' : 'part_latest_order'}) join project pr on pr.id = p.project_id join revision r on r.id = p.latest_revision_id`
					)
				: sql.raw('revision r join part p on p.id = r.part_id join project pr on pr.id = p.project_id');
	const idCol = sql.raw(latest && !f.run ? 'p.latest_revision_id' : 'r.id');

	if (f.sort === 'age') {
		// Age descending is the oldest first.
		const ageDir = sql.raw(f.dir === 'desc' ? 'asc' : 'desc');
		const q = sql`select straight_join ${idCol} as id from ${fromRevisions('latest-order')} ${needsCheck ? cr : sql``} where ${where()} order by ${idCol} ${ageDir} limit ${f.pageSize} offset ${offset}`;
		return (await rowsOf<{ id: number }>(db, q)).map((r) => Number(r.id));
	}
	if (f.sort === 'severity' && f.dir === 'desc') {
		const n = offset + f.pageSize;
		const checked = sql`(select straight_join r.id as id, cr.severity as k1, cr.id as k2 from check_run cr force index (check_run_severity) join revision r on r.latest_check_id = cr.id join part p on p.id = r.part_id ${latest ? sql.raw('and p.latest_revision_id = r.id') : sql``} join project pr on pr.id = p.project_id where ${where()} order by cr.severity ${dir}, cr.id ${dir} limit ${n})`;
		// A rule or wall filter needs a check, so only then are unchecked revisions left out.
		const unchecked = needsCheck
			? null
			: sql`(select straight_join r.id as id, -1 as k1, r.id as k2 from ${fromRevisions('latest-order')} where ${where([sql`r.latest_check_id is null`])} order by ${idCol} ${dir} limit ${n})`;
		const q = unchecked ? sql`select id from (${checked} union all ${unchecked}) u order by k1 ${dir}, k2 ${dir} limit ${f.pageSize} offset ${offset}` : sql`select id from ${checked} u order by k1 ${dir}, k2 ${dir} limit ${f.pageSize} offset ${offset}`;
		return (await rowsOf<{ id: number }>(db, q)).map((r) => Number(r.id));
	}
	// Rows without the figure (no wall or gap found; uploads, for deviation) go last either way.
	const keyDir = f.sort === 'severity' ? sql`coalesce(cr.severity, -1) ${dir}` : f.sort === 'size' ? sql`r.size ${dir}` : f.sort === 'deviation' ? sql`r.deviation is null, r.deviation ${dir}` : sql`${THIN_CR} is null, ${THIN_CR} ${dir}`;
	const q = sql`select straight_join r.id as id from ${fromRevisions('count')} ${f.sort === 'thin' || f.sort === 'severity' || needsCheck ? cr : sql``} where ${where()} order by ${keyDir}, r.id desc limit ${f.pageSize} offset ${offset}`;
	return (await rowsOf<{ id: number }>(db, q)).map((r) => Number(r.id));
}

/**
 * Revisions per state under the filters (not the state tab). Newest only and no filter on the
 * revision or its check: counted from the index part(project_id, latest_status) alone. Otherwise
 * the same joins as the page, from the same covering indexes (a run's from revision(run_id, id)).
 */
export async function stateCounts(db: Db, u: SessionUser, f: QueueFilter): Promise<Record<RevisionState, number>> {
	const latest = f.revisions === 'latest';
	const counts = Object.fromEntries(REVISION_STATES.map((s) => [s, 0])) as Record<RevisionState, number>;
	// The team's few projects first, then each one's parts from part(project_id, latest_status).
	const team = f.project ? sql`pr.team_id = ${u.teamId} and pr.slug = ${f.project}` : sql`pr.team_id = ${u.teamId}`;
	let q: SQL;
	if (latest && !f.assignee && !f.run && !f.rule && f.thinUnder === undefined) {
		q = sql`select straight_join p.latest_status as status, count(*) as n from project pr join part p force index (part_latest_count) on p.project_id = pr.id where ${team} and p.latest_status is not null group by p.latest_status`;
	} else {
		const conds: SQL[] = [team];
		if (f.assignee === 'me') conds.push(sql`r.assignee_id = ${u.id}`);
		else if (f.assignee === 'none') conds.push(sql`r.assignee_id is null`);
		else if (f.assignee) conds.push(sql`r.assignee_id = ${f.assignee}`);
		if (f.run) conds.push(sql`r.run_id = ${f.run}`);
		if (f.rule) conds.push(sql`cr.failed_rules like ${`%,${f.rule},%`}`);
		if (f.thinUnder !== undefined) conds.push(sql`${THIN_CR} < ${f.thinUnder}`);
		const from = f.run
			? sql.raw(`revision r force index (revision_run) join part p on p.id = r.part_id${latest ? ' and p.latest_revision_id = r.id' : ''} join project pr on pr.id = p.project_id`)
			: latest
				? sql.raw('project pr join part p force index (part_latest_count) on p.project_id = pr.id join revision r on r.id = p.latest_revision_id')
				: sql.raw('project pr join part p on p.project_id = pr.id join revision r force index (revision_part_status) on r.part_id = p.id');
		const cr = f.rule || f.thinUnder !== undefined ? sql.raw('left join check_run cr force index (check_run_queue) on cr.id = r.latest_check_id') : sql``;
		q = sql`select straight_join r.status as status, count(*) as n from ${from} ${cr} where ${sql.join(conds, sql` and `)} group by r.status`;
	}
	for (const c of await rowsOf<{ status: RevisionState; n: number }>(db, q)) counts[c.status] += Number(c.n);
	return counts;
}

/**
 * Counts are shared: readers asking with the same filters at once wait for one count, and it is
 * kept for COUNT_TTL_MS unless a status, assignment or upload in this process changes the queue
 * first (queueChanged). A change made by another process (a separate check worker) shows in the
 * counts within COUNT_TTL_MS; the rows are never kept. Without a filter on the revision or its check
 * a count reads one index; with one it joins per part (a run's: per revision of the run), which is
 * what sharing saves under many readers.
 */
const COUNT_TTL_MS = 2000;
let epoch = 0;
const kept = new Map<string, { at: number; epoch: number; counts: Promise<Record<RevisionState, number>> }>();

/** Called after a revision's status, assignee or a new revision was written. */
export function queueChanged(): void {
	epoch++;
	kept.clear();
}

function sharedCounts(db: Db, u: SessionUser, f: QueueFilter): Promise<Record<RevisionState, number>> {
	const key = JSON.stringify([u.teamId, f.assignee === 'me' ? u.id : (f.assignee ?? null), f.project ?? null, f.revisions, f.run ?? null, f.rule ?? null, f.thinUnder ?? null]);
	const now = Date.now();
	const hit = kept.get(key);
	if (hit && hit.epoch === epoch && now - hit.at < COUNT_TTL_MS) return hit.counts;
	const counts = stateCounts(db, u, f);
	const entry = { at: now, epoch, counts };
	kept.set(key, entry);
	// A failed count is not kept; the next reader asks again.
	counts.catch(() => kept.get(key) === entry && kept.delete(key));
	if (kept.size > 500) for (const [k, v] of kept) if (now - v.at >= COUNT_TTL_MS) kept.delete(k);
	return counts;
}

/**
 * The page of rows and the per-state counts. The page's ids come from an ordered index scan
 * (pageIds); names, figures, the run and the superseding revision are joined for those 50 rows only,
 * and the check run's figures are read from its row for them (never its report). Live progress comes
 * from correlated subqueries on job_revision, only for rows still awaiting or under check.
 */
export async function queryQueue(db: Db, u: SessionUser, f: QueueFilter) {
	const uploader = alias(user, 'uploader');
	const assignee = alias(user, 'assignee');
	const newest = alias(revision, 'newest');

	const live = sql`${revision.status} in ('checking', 'awaiting-check')`;
	const activeJob = <T>(col: SQL) =>
		sql<T | null>`case when ${live} then (select ${col} from ${job} where ${job.revisionId} = ${revision.id} and ${ACTIVE_JOB} order by ${job.id} desc limit 1) end`;

	const rowsQuery = async () => {
		const ids = await pageIds(db, u, f);
		if (!ids.length) return [];
		const rows = await db
			.select({
				id: revision.id,
				number: revision.number,
				status: revision.status,
				statusReason: revision.statusReason,
				fileName: revision.fileName,
				size: revision.size,
				source: revision.source,
				createdAt: revision.createdAt,
				deviation: revision.deviation,
				runId: revision.runId,
				runName: run.name,
				iteration: revision.iteration,
				partName: part.name,
				partSlug: part.slug,
				projectName: project.name,
				projectSlug: project.slug,
				units: project.units,
				targetCellSize: project.targetCellSize,
				uploaderId: revision.uploaderId,
				uploaderName: uploader.name,
				assigneeId: revision.assigneeId,
				assigneeName: assignee.name,
				newestId: newest.id,
				newestNumber: newest.number,
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
			.from(revision)
			.innerJoin(part, eq(part.id, revision.partId))
			.innerJoin(project, eq(project.id, part.projectId))
			.innerJoin(uploader, eq(uploader.id, revision.uploaderId))
			.leftJoin(assignee, eq(assignee.id, revision.assigneeId))
			.leftJoin(run, eq(run.id, revision.runId))
			.leftJoin(newest, eq(newest.id, part.latestRevisionId))
			.leftJoin(checkRun, eq(checkRun.id, revision.latestCheckId))
			.where(inArray(revision.id, ids));
		const at = new Map(ids.map((id, i) => [id, i]));
		return rows.sort((a, b) => at.get(a.id)! - at.get(b.id)!);
	};

	const [rows, counts] = await Promise.all([rowsQuery(), sharedCounts(db, u, f)]);
	const total =
		f.status === 'all'
			? Object.values(counts).reduce((a, b) => a + b, 0)
			: f.status === 'needs-action'
				? NEEDS_ACTION.reduce((a, s) => a + counts[s], 0)
				: counts[f.status];

	return {
		rows: rows.map(({ jobStage, jobPercent, newestId, newestNumber, ...r }) => {
			const failedRules = r.failedRules ? r.failedRules.split(',').filter(Boolean) : [];
			return {
				...r,
				failedRules,
				summary: failedRulesSummary(failedRules),
				thin: thinnestOf(r.thinnestWallCells, r.narrowestGapCells),
				/** The part's newer revision that replaces this one, or null when this is the newest. */
				supersededBy: newestId !== null && newestId !== r.id && newestNumber !== null && newestNumber > r.number ? { id: newestId, number: newestNumber } : null,
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
