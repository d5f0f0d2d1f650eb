import { eq, inArray } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { getDb } from '../db';
import { auditEvent, checkRun, job, revision, ruleResult } from '../db/schema';
import { getStore } from '../storage';
import { useFreshDatabase } from '../testing/db';
import { fixture, seededUsers, uploadBytes } from '../testing/fixtures';
import { processCheckJob } from './check';
import { claimJob } from './queue';
import { runWorkerLoop } from './runner';
import { JobWake } from './wake';
import { recheck } from '../decisions';
import { loadRevisionForUser } from '../revisions';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
const LIMITS = { timeLimitMs: 60_000, memoryLimitMb: 1024 };

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-jobs-'));
	({ drop } = await useFreshDatabase('jobs'));
	users = await seededUsers(getDb());
});
afterAll(() => drop());
// Each test starts with an empty queue, whatever an earlier test (or a failed one) left in it.
beforeEach(async () => {
	await getDb()
		.update(job)
		.set({ status: 'done', workerId: null, leaseUntil: null })
		.where(inArray(job.status, ['queued', 'running']));
});

/** Claims and processes jobs until the queue is empty. */
async function drain(workerId = 'test-worker') {
	const db = getDb();
	const outcomes: string[] = [];
	for (let j = await claimJob(db, workerId); j; j = await claimJob(db, workerId)) outcomes.push(await processCheckJob(db, j, workerId, LIMITS));
	return outcomes;
}

describe('check jobs on the real MariaDB', () => {
	it('two workers claiming at once never get the same job', async () => {
		const db = getDb();
		// Ten distinct files: the same cube shifted, so no upload is recognised as a duplicate.
		const base = new TextDecoder().decode(fixture('cube-closed-ascii.stl'));
		for (let i = 0; i < 10; i++) await uploadBytes(db, users.designer, new TextEncoder().encode(base + `\n`.repeat(i + 1)), `pod-${i}.stl`, 'sensor-pods', 'ctd-pod');
		const claimed: number[] = [];
		await Promise.all(
			['w1', 'w2'].map(async (w) => {
				for (let j = await claimJob(db, w); j; j = await claimJob(db, w)) claimed.push(j.id);
			})
		);
		expect(claimed).toHaveLength(10);
		expect(new Set(claimed).size).toBe(10);
		// Make them claimable again at once and process them all.
		await db.update(job).set({ status: 'queued', attempts: 0, workerId: null });
		await drain();
		const rows = await db.select({ status: revision.status }).from(revision);
		expect(rows.every((r) => r.status === 'clear')).toBe(true);
	});

	it("retries a killed worker's job once its lease runs out, and counts the result once", async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-closed.stl'), 'keel.stl', 'keel-bulbs', 'keel-bulb-a');
		const first = await claimJob(db, 'doomed', 50);
		expect(first?.revisionId).toBe(up.revisionId);
		// The worker "dies": no heartbeat, no result. After the lease another worker takes over.
		await new Promise((r) => setTimeout(r, 120));
		const second = await claimJob(db, 'rescuer');
		expect(second?.id).toBe(first!.id);
		expect(second?.attempts).toBe(2);
		expect(await processCheckJob(db, second!, 'rescuer', LIMITS)).toBe('done');
		// The dead worker coming back late cannot write a second result.
		expect(await processCheckJob(db, first!, 'doomed', LIMITS)).toBe('lost');
		const runs = await db.select().from(checkRun).where(eq(checkRun.revisionId, up.revisionId));
		expect(runs).toHaveLength(1);
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('clear');
	});

	it('ends a bad file as unreadable with the reader message and no check rows', async () => {
		const db = getDb();
		const bytes = new TextEncoder().encode('solid pod\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendfacet\nendsolid pod\n');
		const up = await uploadBytes(db, users.designer, bytes, 'broken-pod.stl', 'sensor-pods', 'ctd-pod');
		expect(await drain()).toEqual(['refused']);
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('unreadable');
		expect(rev.statusReason).toMatch(/endloop/);
		expect(await db.select().from(checkRun).where(eq(checkRun.revisionId, up.revisionId))).toHaveLength(0);
		const audits = await db.select().from(auditEvent).where(eq(auditEvent.entityId, String(up.revisionId)));
		expect(audits.map((a) => a.action)).toEqual(['uploaded', 'check-started', 'unreadable']);
	});

	it('holds a mesh with a hole and explains it in plain words', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-one-face-missing.stl'), 'pod-open.stl');
		expect(await drain()).toEqual(['done']);
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('held');
		const [run] = await db.select().from(checkRun).where(eq(checkRun.revisionId, up.revisionId));
		expect(run.boundaryEdges).toBe(4);
		expect(run.failedRules).toContain(',closed,');
		const rules = await db.select().from(ruleResult).where(eq(ruleResult.checkRunId, run.id));
		const closed = rules.find((r) => r.rule === 'closed')!;
		expect(closed.passed).toBe(false);
		expect(closed.explanation).toMatch(/1 hole .*tell fluid from solid/);
	});

	it('recognises the same bytes uploaded twice to one part and stores them once', async () => {
		const db = getDb();
		const a = await uploadBytes(db, users.designer, fixture('cube-regions.obj'), 'pod.obj', 'tow-bodies', 'mag-tow-body');
		const b = await uploadBytes(db, users.engineer, fixture('cube-regions.obj'), 'pod-again.obj', 'tow-bodies', 'mag-tow-body');
		expect(b.duplicateOf).toBe(a.revisionId);
		expect(await db.select().from(revision).where(eq(revision.sha256, (await db.select().from(revision).where(eq(revision.id, a.revisionId)))[0].sha256))).toHaveLength(1);
		await drain();
	});

	it('a check whose stored file is missing ends check-incomplete (not unreadable) at once, with a reason that names no server path', async () => {
		const db = getDb();
		const base = new TextDecoder().decode(fixture('cube-closed-ascii.stl'));
		const up = await uploadBytes(db, users.designer, new TextEncoder().encode(base + '\n\n\n\n\n\n\n\n\n\n\n\n'), 'lost.stl', 'sensor-pods', 'lost-pod');
		const [r0] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		await getStore().delete(r0.sha256);
		// Retrying cannot bring the file back, so there is one attempt only.
		expect(await drain()).toEqual(['failed']);
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('check-incomplete');
		expect(rev.statusReason).toMatch(/the stored file is missing/);
		const [j] = await db.select().from(job).where(eq(job.revisionId, up.revisionId));
		expect(j.status).toBe('failed');
		expect(j.attempts).toBe(1);
		const audits = await db.select().from(auditEvent).where(eq(auditEvent.entityId, String(up.revisionId)));
		expect(audits.map((a) => a.action)).toEqual(['uploaded', 'check-started', 'check-incomplete']);
		for (const text of [rev.statusReason ?? '', j.lastError ?? '', JSON.stringify(audits.map((a) => a.detail ?? null))]) {
			expect(text).not.toContain(process.env.SHELLGATE_DATA_DIR!);
			expect(text).not.toMatch(/ENOENT|\/tmp\//);
		}
	});

	it('a check that keeps running past its time limit ends check-incomplete with the reason, and a re-check from there finishes', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-closed.stl'), 'slow-pod.stl', 'sensor-pods', 'slow-pod');
		const worker = 'timed-worker';
		const outcomes: string[] = [];
		// A 1 ms limit: every attempt is ended by the time limit, until the attempts run out.
		for (let j = await claimJob(db, worker); j; j = await claimJob(db, worker)) outcomes.push(await processCheckJob(db, j, worker, { ...LIMITS, timeLimitMs: 1 }));
		expect(outcomes.length).toBeGreaterThan(0);
		expect(outcomes.every((o) => o === 'failed')).toBe(true);
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('check-incomplete');
		expect(rev.statusReason).toMatch(/gave up after \d+ attempts/);
		expect(rev.statusReason).toMatch(/time limit/);
		expect(await db.select().from(checkRun).where(eq(checkRun.revisionId, up.revisionId))).toHaveLength(0);

		const ctx = await loadRevisionForUser(db, users.engineer, up.revisionId);
		await recheck(db, users.engineer, ctx);
		const [again] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(again.status).toBe('awaiting-check');
		expect(await drain()).toEqual(['done']);
		const [done] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(done.status).toBe('clear');
		const audits = await db.select().from(auditEvent).where(eq(auditEvent.entityId, String(up.revisionId)));
		expect(audits.map((a) => a.action)).toContain('check-incomplete');
		expect(audits.map((a) => a.action)).not.toContain('unreadable');
	});

	it('a worker loop idle on an empty queue starts on an upload of its own process at once, not after its idle poll', async () => {
		const db = getDb();
		const wake = new JobWake().listen();
		const stop = new AbortController();
		const outcomes: string[] = [];
		// An idle poll far longer than the test waits: only the wake-up can start this check.
		const loop = runWorkerLoop({ db: getDb, workerId: 'woken-worker', idleMs: 10 * 60_000, wake, signal: stop.signal, onResult: (_id, o) => outcomes.push(o) });
		try {
			// Let the loop find the queue empty and go to sleep.
			await new Promise((r) => setTimeout(r, 300));
			const base = new TextDecoder().decode(fixture('cube-closed-ascii.stl'));
			const up = await uploadBytes(db, users.designer, new TextEncoder().encode(base + '\n'.repeat(20)), 'woken.stl', 'sensor-pods', 'woken-pod');
			let status = 'awaiting-check';
			// The loop reports the outcome after the result's commit, so the status can read clear a moment before it does.
			for (let i = 0; i < 600 && (['awaiting-check', 'checking'].includes(status) || outcomes.length === 0); i++) {
				await new Promise((r) => setTimeout(r, 50));
				[{ status }] = await db.select({ status: revision.status }).from(revision).where(eq(revision.id, up.revisionId));
			}
			expect(status).toBe('clear');
			expect(outcomes).toEqual(['done']);
			const [j] = await db.select().from(job).where(eq(job.revisionId, up.revisionId));
			expect(j.workerId).toBe('woken-worker');
			expect(j.attempts).toBe(1);
		} finally {
			stop.abort();
			wake.close();
			await loop;
		}
	});
});
