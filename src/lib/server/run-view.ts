// What the run page shows: counts by state, pass rate per rule, distributions of the latest checks'
// measures, the topology timeline and shape distances across iterations, and a paged, filterable
// table of the run's revisions.
//
// One query reads a row per revision with its latest check, from narrow check_run columns only
// (genus, shells, volume, check time, and the wetted area, frontal area, shortest edge in cells and
// distance to the previous iteration the check job copies out of the report): the large report
// column is never read. Taking those values out of every report with JSON_VALUE instead cost 361 ms
// at 1,000 revisions (npm run bench:run-page). The charts and the table filter work on the rows in
// memory: a run holds thousands of revisions, not millions.
import { asc, eq, sql } from 'drizzle-orm';
import type { Db } from './db';
import { checkRun, part, revision, ruleResult } from './db/schema';
import { RULE_TITLES } from '../gate/rules';
import { distribution, inBar, topologyTimeline, type Distribution, type TimelinePoint } from '../run-charts';
import { REVISION_STATES, type RevisionState } from '../revision-states';

export const RUN_PAGE_SIZE = 50;

/** The continuous measures drawn and filterable, with the dimension their unit has (0: not a length; see unit). */
export const RUN_MEASURES = {
	volume: { title: 'Volume', dim: 3 },
	wetted: { title: 'Wetted area', dim: 2 },
	frontal: { title: 'Frontal area (along the flow)', dim: 2 },
	edgeCells: { title: 'Shortest edge, in target cells', dim: 0 },
	checkMs: { title: 'Check time', dim: 0 },
	hausdorff: { title: 'Hausdorff distance to the previous iteration', dim: 1 },
	chamfer: { title: 'Chamfer distance to the previous iteration', dim: 1 }
} as const;
export type RunMeasure = keyof typeof RUN_MEASURES;

export interface RunRowView {
	id: number;
	number: number;
	iteration: number | null;
	partSlug: string;
	partName: string;
	status: RevisionState;
	reason: string | null;
	checked: boolean;
	genus: number | null;
	shells: number | null;
	failedRules: string[];
	volume: number | null;
	wetted: number | null;
	frontal: number | null;
	edgeCells: number | null;
	checkMs: number | null;
	hausdorff: number | null;
	chamfer: number | null;
	previousIteration: number | null;
	/** For a repair: the number of the revision it repaired. */
	repairOf: number | null;
	/** For a revision a repair was made from (in this run): the first such repair. */
	repairedIn: { id: number; number: number } | null;
}

export interface RunFilter {
	state?: RevisionState;
	rule?: string;
	genus?: number;
	shells?: number;
	iteration?: number;
	measure?: { key: RunMeasure; lo: number; hi: number; last: boolean };
}

const int = (v: string | null) => (v !== null && /^-?\d{1,9}$/.test(v) ? Number(v) : undefined);
const real = (v: string | null) => (v !== null && v !== '' && Number.isFinite(Number(v)) ? Number(v) : undefined);

/** The table filter from the page address; unknown or malformed parameters are ignored. */
export function parseRunFilter(q: URLSearchParams): RunFilter {
	const f: RunFilter = {};
	const state = q.get('state');
	if (state && (REVISION_STATES as readonly string[]).includes(state)) f.state = state as RevisionState;
	const rule = q.get('rule');
	if (rule && rule in RULE_TITLES) f.rule = rule;
	f.genus = int(q.get('genus'));
	f.shells = int(q.get('shells'));
	f.iteration = int(q.get('it'));
	const m = q.get('m');
	const lo = real(q.get('lo')), hi = real(q.get('hi'));
	if (m && m in RUN_MEASURES && lo !== undefined && hi !== undefined) f.measure = { key: m as RunMeasure, lo, hi, last: q.get('last') === '1' };
	for (const k of Object.keys(f) as (keyof RunFilter)[]) if (f[k] === undefined) delete f[k];
	return f;
}

export function matchesFilter(r: RunRowView, f: RunFilter): boolean {
	if (f.state && r.status !== f.state) return false;
	if (f.rule && !r.failedRules.includes(f.rule)) return false;
	if (f.genus !== undefined && r.genus !== f.genus) return false;
	if (f.shells !== undefined && r.shells !== f.shells) return false;
	if (f.iteration !== undefined && r.iteration !== f.iteration) return false;
	if (f.measure && !inBar(r[f.measure.key], f.measure.lo, f.measure.hi, f.measure.last)) return false;
	return true;
}

const num = (v: unknown): number | null => {
	if (v === null || v === undefined || v === 'null' || v === '') return null;
	const n = Number(v);
	return Number.isFinite(n) ? n : null;
};

/** One row per revision of the run, with its latest check's measures, in iteration order (then upload order). */
export async function runRows(db: Db, runId: number): Promise<RunRowView[]> {
	const rows = await db
		.select({
			id: revision.id,
			number: revision.number,
			iteration: revision.iteration,
			partSlug: part.slug,
			partName: part.name,
			status: revision.status,
			reason: revision.statusReason,
			checkId: checkRun.id,
			genus: checkRun.genus,
			shells: checkRun.shells,
			volume: checkRun.volume,
			watertight: checkRun.watertight,
			failedRules: checkRun.failedRules,
			durationMs: checkRun.durationMs,
			wetted: checkRun.wettedArea,
			frontal: checkRun.frontalArea,
			edgeCells: checkRun.shortestEdgeCells,
			hausdorff: checkRun.iterationHausdorff,
			chamfer: checkRun.iterationChamfer,
			prevIt: checkRun.previousIteration,
			parentId: revision.parentRevisionId
		})
		.from(revision)
		.innerJoin(part, eq(part.id, revision.partId))
		.leftJoin(checkRun, eq(checkRun.id, revision.latestCheckId))
		.where(eq(revision.runId, runId))
		.orderBy(asc(sql`${revision.iteration} is null`), asc(revision.iteration), asc(revision.id));
	// Repairs of a run's revisions are in the run too (jobs/repair.ts), so both ends are among these rows.
	const byId = new Map(rows.map((r) => [r.id, r]));
	const firstRepair = new Map<number, { id: number; number: number }>();
	for (const r of rows) {
		if (r.parentId === null) continue;
		const seen = firstRepair.get(r.parentId);
		if (!seen || r.id < seen.id) firstRepair.set(r.parentId, { id: r.id, number: r.number });
	}
	return rows.map((r) => {
		const checked = r.checkId !== null;
		return {
			id: r.id,
			number: r.number,
			iteration: r.iteration,
			partSlug: r.partSlug,
			partName: r.partName,
			status: r.status,
			reason: r.reason,
			checked,
			genus: checked ? r.genus : null,
			shells: checked ? r.shells : null,
			failedRules: (r.failedRules ?? '').split(',').filter(Boolean),
			// check_run stores 0 for an undefined volume (open surface): shown as missing, not as 0.
			volume: checked && r.watertight ? r.volume : null,
			wetted: num(r.wetted),
			frontal: num(r.frontal),
			edgeCells: num(r.edgeCells),
			checkMs: checked ? r.durationMs : null,
			hausdorff: num(r.hausdorff),
			chamfer: num(r.chamfer),
			previousIteration: num(r.prevIt),
			repairOf: r.parentId !== null ? (byId.get(r.parentId)?.number ?? null) : null,
			repairedIn: firstRepair.get(r.id) ?? null
		};
	});
}

export interface RulePassRate {
	rule: string;
	title: string;
	passed: number;
	total: number;
}

/** Per rule, how many of the run's latest checks passed it. */
export async function rulePassRates(db: Db, runId: number): Promise<RulePassRate[]> {
	const rows = await db
		.select({ rule: ruleResult.rule, passed: sql<number>`sum(${ruleResult.passed})`, total: sql<number>`count(*)` })
		.from(revision)
		.innerJoin(ruleResult, eq(ruleResult.checkRunId, revision.latestCheckId))
		.where(eq(revision.runId, runId))
		.groupBy(ruleResult.rule);
	return rows
		.map((r) => ({ rule: r.rule, title: RULE_TITLES[r.rule as keyof typeof RULE_TITLES] ?? r.rule, passed: Number(r.passed), total: Number(r.total) }))
		.sort((a, b) => a.passed / a.total - b.passed / b.total || a.title.localeCompare(b.title));
}

export interface RunView {
	distributions: { genus: Distribution; shells: Distribution } & Record<RunMeasure, Distribution>;
	timeline: TimelinePoint[];
	distances: { iteration: number; revisionId: number; hausdorff: number; chamfer: number; previousIteration: number | null }[];
	table: { rows: RunRowView[]; total: number; page: number; pages: number };
}

/** Charts over all the run's rows, the table over the filtered ones. */
export function runView(rows: RunRowView[], filter: RunFilter, page: number): RunView {
	const d = (key: RunMeasure) => distribution(key, rows.map((r) => r[key]));
	const filtered = rows.filter((r) => matchesFilter(r, filter));
	const pages = Math.max(1, Math.ceil(filtered.length / RUN_PAGE_SIZE));
	const p = Math.min(Math.max(1, page), pages);
	return {
		distributions: {
			genus: distribution('genus', rows.map((r) => r.genus), { discrete: true }),
			shells: distribution('shells', rows.map((r) => r.shells), { discrete: true }),
			volume: d('volume'),
			wetted: d('wetted'),
			frontal: d('frontal'),
			edgeCells: d('edgeCells'),
			checkMs: d('checkMs'),
			hausdorff: d('hausdorff'),
			chamfer: d('chamfer')
		},
		timeline: topologyTimeline(rows.map((r) => ({ iteration: r.iteration, revisionId: r.id, genus: r.genus, shells: r.shells }))),
		distances: rows
			.filter((r) => r.iteration !== null && r.hausdorff !== null && r.chamfer !== null)
			.map((r) => ({ iteration: r.iteration!, revisionId: r.id, hausdorff: r.hausdorff!, chamfer: r.chamfer!, previousIteration: r.previousIteration })),
		table: { rows: filtered.slice((p - 1) * RUN_PAGE_SIZE, p * RUN_PAGE_SIZE), total: filtered.length, page: p, pages }
	};
}
