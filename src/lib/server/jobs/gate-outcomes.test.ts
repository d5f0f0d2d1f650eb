// Every gate rule × every way it can come out, written through the check job's own result writer on
// the real MariaDB: the revision status, the stored severity, the queue's "What is wrong" summary and
// the queue's rule filter must tell the same story.
import { desc, eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_GATE_RULES, type GateRules } from '../../gate/profile';
import { RULE_IDS, RULE_TITLES, type RuleId, type RuleVerdict } from '../../gate/rules';
import { inspectBytes } from '../../mesh/inspect';
import type { InspectionReport } from '../../mesh/report';
import { getDb } from '../db';
import { checkRun, gateProfile, project, revision, ruleResult } from '../db/schema';
import { parseQueueFilter, queryQueue } from '../queue-view';
import { useFreshDatabase } from '../testing/db';
import { fixture, seededUsers, uploadBytes } from '../testing/fixtures';
import { loadCheckSetup, writeCheckResult } from './check';
import { claimJob } from './queue';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;

/** Every rule switched on, so each one is evaluated on every row. */
const ALL_RULES: GateRules = { ...DEFAULT_GATE_RULES, expectedGenus: 0, maxShells: 1, expectedSize: { mode: 'absolute', min: 0.5, max: 5 }, minWallGapCells: 2 };

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-gate-'));
	({ drop } = await useFreshDatabase('gate_outcomes'));
	users = await seededUsers(getDb());
	const db = getDb();
	const [p] = await db.select().from(project).where(eq(project.slug, 'sensor-pods'));
	const [latest] = await db.select().from(gateProfile).where(eq(gateProfile.projectId, p.id)).orderBy(desc(gateProfile.version)).limit(1);
	await db.insert(gateProfile).values({ projectId: p.id, version: latest.version + 1, rules: ALL_RULES, createdBy: users.admin.id });
});
afterAll(() => drop());

/** A clean closed unit cube (sensor-pods: mm, cell 2); each row breaks exactly one fact of it. */
const base = (): InspectionReport => {
	// Measured for the project's 2 mm cell; the 1 mm cube's own walls are then widened to 5 cells
	// so the walls-and-gaps rule passes on the clean row like every other rule.
	const r = structuredClone(inspectBytes(fixture('cube-closed.stl'), 'cube-closed.stl', { cellSize: 2 }));
	r.cellSizeChecks!.thinnestWall = { ...r.cellSizeChecks!.thinnestWall!, value: 10, cells: 5 };
	return r;
};

const CASES: { rule: RuleId; verdict: RuleVerdict; edit: (r: InspectionReport) => void }[] = [
	{ rule: 'closed', verdict: 'failed', edit: (r) => Object.assign(r, { boundaryEdges: 4, boundaryLoops: 1, watertight: false, holes: [{ edgeCount: 4, perimeter: 4, centroid: [0.5, 0.5, 1], bbox: r.bbox, onBboxPlane: null, shell: 0 }] }) },
	{ rule: 'manifold', verdict: 'failed', edit: (r) => Object.assign(r, { nonManifoldEdges: 1 }) },
	{ rule: 'outward-oriented', verdict: 'failed', edit: (r) => Object.assign(r, { consistentlyOriented: false, flippedFaces: 2 }) },
	{ rule: 'no-self-intersections', verdict: 'failed', edit: (r) => Object.assign(r, { selfIntersectingPairs: 3, selfIntersectionSample: [{ a: 0, b: 5, point: [0.5, 0.5, 0.5] }] }) },
	{ rule: 'no-self-intersections', verdict: 'not-checked', edit: (r) => Object.assign(r, { selfIntersectingPairs: null }) },
	{ rule: 'min-edge-length', verdict: 'failed', edit: (r) => Object.assign(r, { minEdgeLength: 1e-6, shortEdges: 1 }) },
	{ rule: 'max-shells', verdict: 'failed', edit: (r) => Object.assign(r, { components: 2 }) },
	{ rule: 'expected-genus', verdict: 'failed', edit: (r) => Object.assign(r, { genus: 1 }) },
	{ rule: 'max-degenerate-faces', verdict: 'failed', edit: (r) => Object.assign(r, { degenerateFaces: 1 }) },
	{ rule: 'expected-size', verdict: 'failed', edit: (r) => Object.assign(r, { bbox: { min: [0, 0, 0], max: [1000, 1000, 1000] } }) },
	{ rule: 'walls-and-gaps', verdict: 'failed', edit: (r) => Object.assign(r.cellSizeChecks!, { narrowestGap: { value: 0.01, cells: 0.005, face: 0, otherFace: 7, from: [0, 0, 0], to: [0.01, 0, 0] }, narrowGapFaces: 2 }) },
	{ rule: 'walls-and-gaps', verdict: 'not-checked', edit: (r) => Object.assign(r, { cellSizeChecks: null }) }
];

const EXPECTED = {
	passed: { status: 'clear', severity: 0, blocks: false },
	failed: { status: 'held', severity: 10, blocks: true },
	'not-checked': { status: 'clear', severity: 1, blocks: false }
} as const;

let n = 0;
async function checkWithReport(report: InspectionReport) {
	const db = getDb();
	// A distinct file per row, so no upload is taken for a duplicate of an earlier one.
	const bytes = new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + '\n'.repeat(++n));
	const up = await uploadBytes(db, users.designer, bytes, `pod-${n}.stl`, 'sensor-pods', `gate-row-${n}`);
	const j = await claimJob(db, 'gate-test');
	expect(j?.revisionId).toBe(up.revisionId);
	const setup = await loadCheckSetup(db, j!.revisionId);
	expect(await writeCheckResult(db, j!, 'gate-test', setup!, report)).toBe(true);
	return up.revisionId;
}

async function inQueue(revisionId: number, rule?: RuleId) {
	const q = await queryQueue(getDb(), users.engineer, parseQueueFilter(new URLSearchParams(`status=all&pageSize=200${rule ? `&rule=${rule}` : ''}`)));
	return q.rows.find((r) => r.id === revisionId);
}

describe('gate rule outcomes through the check job on the real MariaDB', () => {
	it('covers every rule with a failing row', () => {
		expect(new Set(CASES.filter((c) => c.verdict === 'failed').map((c) => c.rule))).toEqual(new Set(RULE_IDS));
	});

	const rows = [{ rule: null, verdict: 'passed' as const, edit: () => {} }, ...CASES];
	it.each(rows)('$rule $verdict: status, severity, summary and rule filter agree', async ({ rule, verdict, edit }) => {
		const db = getDb();
		const report = base();
		edit(report);
		const id = await checkWithReport(report);
		const want = EXPECTED[verdict];

		const [rev] = await db.select().from(revision).where(eq(revision.id, id));
		expect(rev.status).toBe(want.status);
		const [run] = await db.select().from(checkRun).where(eq(checkRun.id, rev.latestCheckId!));
		expect(run.severity).toBe(want.severity);
		const results = await db.select().from(ruleResult).where(eq(ruleResult.checkRunId, run.id));
		expect(results.map((x) => x.rule).sort()).toEqual([...RULE_IDS].sort());
		for (const x of results) {
			// No stored outcome is without a severity; only the row's rule differs from passed.
			const v: RuleVerdict = x.rule === rule ? verdict : 'passed';
			expect({ rule: x.rule, passed: x.passed, severity: x.severity }).toEqual({ rule: x.rule, passed: v === 'passed', severity: { passed: 'info', failed: 'blocking', 'not-checked': 'warning' }[v] });
		}

		const row = await inQueue(id);
		expect(row?.status).toBe(want.status);
		expect(row?.severity).toBe(want.severity);
		if (want.blocks) {
			expect(run.failedRules).toBe(`,${rule},`);
			expect(row?.failedRules).toEqual([rule]);
			expect(row?.summary).toBe(RULE_TITLES[rule!]);
			expect(rev.statusReason).toBe(RULE_TITLES[rule!]);
		} else {
			expect(run.failedRules).toBe('');
			expect(row?.summary).toBeNull();
		}
		// The rule filter finds the revision under exactly the rules that hold it.
		for (const r of RULE_IDS) expect({ rule: r, found: !!(await inQueue(id, r)) }).toEqual({ rule: r, found: want.blocks && r === rule });
	});
});
