import { desc, eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getDb } from './db';
import { checkRun, revision } from './db/schema';
import { inspectBytes } from '../mesh/inspect';
import type { InspectionReport } from '../mesh/report';
import { loadCheckSetup, processCheckJob, writeCheckResult } from './jobs/check';
import { claimJob } from './jobs/queue';
import { processRepairJob } from './jobs/repair';
import { parseQueueFilter, queryQueue, thinnestOf } from './queue-view';
import { proposeRepair, standardRecipe } from './repairs';
import { recheck } from './decisions';
import { loadRevisionForUser } from './revisions';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers, uploadBytes } from './testing/fixtures';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
const LIMITS = { timeLimitMs: 60_000, memoryLimitMb: 1024 };

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-queue-'));
	({ drop } = await useFreshDatabase('queue'));
	users = await seededUsers(getDb());
});
afterAll(() => drop());

async function drain() {
	const db = getDb();
	for (let j = await claimJob(db, 'queue-test'); j; j = await claimJob(db, 'queue-test')) {
		await (j.kind === 'repair' ? processRepairJob : processCheckJob)(db, j, 'queue-test', LIMITS);
	}
}

async function newestRunId(revisionId: number) {
	const [r] = await getDb().select({ id: checkRun.id }).from(checkRun).where(eq(checkRun.revisionId, revisionId)).orderBy(desc(checkRun.id)).limit(1);
	return r?.id ?? null;
}

async function queueRow(revisionId: number, query = 'status=all&pageSize=200') {
	const q = await queryQueue(getDb(), users.engineer, parseQueueFilter(new URLSearchParams(query)));
	return q.rows.find((r) => r.id === revisionId);
}

describe('the queue on the real MariaDB', () => {
	it("shows a twice-checked revision with its latest check's figures, and latest_check_id follows the re-check", async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-one-face-missing.stl'), 'pod-open.stl');
		await drain();
		const first = await newestRunId(up.revisionId);
		const [afterFirst] = await db.select({ latest: revision.latestCheckId }).from(revision).where(eq(revision.id, up.revisionId));
		expect(afterFirst.latest).toBe(first);
		expect((await queueRow(up.revisionId))?.boundaryEdges).toBe(4);

		// Mark the first run's figures so a join to the wrong run would show.
		await db.update(checkRun).set({ boundaryEdges: 999, faces: 999 }).where(eq(checkRun.id, first!));
		await recheck(db, users.engineer, await loadRevisionForUser(db, users.engineer, up.revisionId));
		// While the re-check waits, the queue keeps showing the newest finished run.
		expect((await queueRow(up.revisionId))?.boundaryEdges).toBe(999);
		await drain();
		const second = await newestRunId(up.revisionId);
		expect(second).toBeGreaterThan(first!);
		const [afterSecond] = await db.select({ latest: revision.latestCheckId }).from(revision).where(eq(revision.id, up.revisionId));
		expect(afterSecond.latest).toBe(second);

		const row = await queueRow(up.revisionId);
		expect(row?.boundaryEdges).toBe(4);
		expect(row?.faces).toBe(10);
		expect(row?.failedRules).toContain('closed');
		// Counts and rows agree under a rule filter, which joins the same latest run.
		const held = await queryQueue(db, users.engineer, parseQueueFilter(new URLSearchParams('status=held&rule=closed')));
		expect(held.rows.map((r) => r.id)).toContain(up.revisionId);
		expect(held.total).toBe(held.rows.length);
	});

	it('gives a repaired revision its own latest check, leaving the original on its own', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-one-face-missing.stl'), 'pod-open-b.stl', 'sensor-pods', 'ctd-pod');
		await drain();
		const original = await newestRunId(up.revisionId);
		const ctx = await loadRevisionForUser(db, users.engineer, up.revisionId);
		await proposeRepair(db, users.engineer, up.revisionId, standardRecipe(ctx.project.targetCellSize), 'standard');
		await drain();
		const [repaired] = await db.select().from(revision).where(eq(revision.parentRevisionId, up.revisionId));
		expect(repaired).toBeDefined();
		const repairedRun = await newestRunId(repaired.id);
		expect(repairedRun).not.toBeNull();
		expect(repaired.latestCheckId).toBe(repairedRun);
		const [orig] = await db.select({ latest: revision.latestCheckId }).from(revision).where(eq(revision.id, up.revisionId));
		expect(orig.latest).toBe(original);
		const row = await queueRow(repaired.id);
		expect(row?.boundaryEdges).toBe(0);
	});

	it('shows live progress only for rows awaiting or under check', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-closed.stl'), 'pod-waiting.stl', 'keel-bulbs', 'keel-bulb-a');
		const waiting = await queueRow(up.revisionId);
		expect(waiting?.status).toBe('awaiting-check');
		expect(waiting?.progress).toEqual({ revisionId: up.revisionId, stage: null, percent: 0 });
		await drain();
		const done = await queueRow(up.revisionId);
		expect(done?.status).toBe('clear');
		expect(done?.progress).toBeNull();
	});

	it('shows the smaller of thinnest wall and narrowest gap in cells, sorts on it and filters under N cells', async () => {
		const db = getDb();
		let n = 0;
		async function checkWith(edit: (r: InspectionReport) => void) {
			const r = structuredClone(inspectBytes(fixture('cube-closed.stl'), 'cube-closed.stl', { cellSize: 2 }));
			edit(r);
			const bytes = new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + '\n'.repeat(++n));
			const up = await uploadBytes(db, users.designer, bytes, `pod-thin-${n}.stl`, 'sensor-pods', `thin-row-${n}`);
			const j = await claimJob(db, 'queue-test');
			expect(j?.revisionId).toBe(up.revisionId);
			expect(await writeCheckResult(db, j!, 'queue-test', (await loadCheckSetup(db, j!.revisionId))!, r)).toBe(true);
			return up.revisionId;
		}
		const finding = (cells: number) => ({ value: cells * 2, cells, face: 0, otherFace: 1, from: [0, 0, 0] as [number, number, number], to: [cells * 2, 0, 0] as [number, number, number] });
		// A: a narrow gap under a comfortable wall; B: a thin wall and no gap within range; C: not measured.
		const a = await checkWith((r) => Object.assign(r.cellSizeChecks!, { thinnestWall: finding(3), narrowestGap: finding(0.5) }));
		const b = await checkWith((r) => Object.assign(r.cellSizeChecks!, { thinnestWall: finding(1.25), narrowestGap: null }));
		const c = await checkWith((r) => Object.assign(r, { cellSizeChecks: null }));

		const [runA] = await db.select({ wall: checkRun.thinnestWallCells, gap: checkRun.narrowestGapCells }).from(checkRun).where(eq(checkRun.revisionId, a));
		expect(runA).toEqual({ wall: 3, gap: 0.5 });
		expect((await queueRow(a))?.thin).toEqual({ cells: 0.5, which: 'gap' });
		expect((await queueRow(b))?.thin).toEqual({ cells: 1.25, which: 'wall' });
		expect((await queueRow(c))?.thin).toBeNull();

		const order = async (query: string) => {
			const q = await queryQueue(db, users.engineer, parseQueueFilter(new URLSearchParams(`status=all&pageSize=200&project=sensor-pods&${query}`)));
			return q.rows.map((r) => r.id).filter((id) => [a, b, c].includes(id));
		};
		expect(await order('sort=thin&dir=asc')).toEqual([a, b, c]);
		// Rows without a figure stay last when the order turns.
		expect(await order('sort=thin&dir=desc')).toEqual([b, a, c]);

		const under = await queryQueue(db, users.engineer, parseQueueFilter(new URLSearchParams('status=all&pageSize=200&thinUnder=2&sort=thin&dir=asc')));
		const ids = under.rows.map((r) => r.id);
		expect(ids).toContain(a);
		expect(ids).toContain(b);
		expect(ids).not.toContain(c);
		expect(under.rows.every((r) => r.thin !== null && r.thin.cells < 2)).toBe(true);
		// The counts take the same filter as the rows.
		expect(under.total).toBe(under.rows.length);
		const underOne = await order('thinUnder=1');
		expect(underOne).toEqual([a]);
		expect(() => parseQueueFilter(new URLSearchParams('thinUnder=-1'))).toThrow();
	});

	it('picks the smaller of wall and gap, and which', () => {
		expect(thinnestOf(null, null)).toBeNull();
		expect(thinnestOf(2, null)).toEqual({ cells: 2, which: 'wall' });
		expect(thinnestOf(null, 0.4)).toEqual({ cells: 0.4, which: 'gap' });
		expect(thinnestOf(1, 1)).toEqual({ cells: 1, which: 'wall' });
	});
});
