import { mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { getDb } from './db';
import { auditEvent, checkRun, job, mailOutbox, part, revision, run, userRole } from './db/schema';
import { loadSessionUser } from './auth';
import { recheck } from './decisions';
import { processCheckJob } from './jobs/check';
import { claimJob } from './jobs/queue';
import { processRepairJob } from './jobs/repair';
import { countBatchHeld, proposeRepair, repairBatch, standardRecipe } from './repairs';
import { loadRevisionForUser } from './revisions';
import { sendRunDigests } from './run-digest';
import { findOrCreateRun, ingestRunFile, loadRunForUser, runSummary } from './runs';
import { spool } from './storage';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers, uploadBytes } from './testing/fixtures';
const variant = (name: string, tag: string) => new Uint8Array([...fixture(name), ...new TextEncoder().encode(`\n# ${tag}\n`)]);
import { writeBinaryStl } from '../mesh/write';
import { icosphere, torus } from '../mesh/testing/test-meshes';
import type { InspectionReport } from '../mesh/report';
import { isDomainError } from '../domain-error';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
let spoolDir: string;
const LIMITS = { timeLimitMs: 60_000, memoryLimitMb: 1024 };

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-runs-'));
	spoolDir = path.join(process.env.SHELLGATE_DATA_DIR, 'tmp');
	({ drop } = await useFreshDatabase('runs'));
	users = await seededUsers(getDb());
});
afterAll(() => drop());
beforeEach(async () => {
	await getDb().update(job).set({ status: 'done', workerId: null, leaseUntil: null }).where(inArray(job.status, ['queued', 'running']));
});

async function drain() {
	const db = getDb();
	for (let j = await claimJob(db, 'w'); j; j = await claimJob(db, 'w')) await (j.kind === 'repair' ? processRepairJob : processCheckJob)(db, j, 'w', LIMITS);
}

const sphereStl = (r: number) => writeBinaryStl(icosphere(2, r));
const torusStl = (R: number) => writeBinaryStl(torus(32, 12, R, R / 3));

async function put(opts: { run: string | null; kind?: string | null; part?: string | null; file: string; bytes: Uint8Array; meta?: string | null; project?: string }) {
	const spooled = await spool(Readable.from([Buffer.from(opts.bytes)]), 1 << 30);
	return ingestRunFile(getDb(), {
		user: users.designer,
		projectSlug: opts.project ?? 'keel-bulbs',
		runName: opts.run,
		runKind: opts.kind ?? null,
		partSlug: opts.part ?? null,
		fileName: opts.file,
		spooled,
		meta: opts.meta ?? null,
		source: 'api'
	});
}

async function expectRefused(p: Promise<unknown>, kind: string, message: RegExp) {
	const e = await p.then(() => null, (x: unknown) => x);
	expect(isDomainError(e)).toBe(true);
	expect((e as { kind: string }).kind).toBe(kind);
	expect((e as Error).message).toMatch(message);
}

describe('generator runs on the real MariaDB', () => {
	it('ten concurrent first requests naming one run make one run and one audit row', async () => {
		const db = getDb();
		const [pr] = await db.select().from(part).limit(1);
		const got = await Promise.all(Array.from({ length: 10 }, () => findOrCreateRun(db, users.designer, pr.projectId, '  sweep 7 ', 'iterations')));
		expect(new Set(got.map((g) => g.run.id)).size).toBe(1);
		expect(got.filter((g) => g.created)).toHaveLength(1);
		expect(got[0].run.name).toBe('sweep 7');
		const rows = await db.select().from(auditEvent).where(and(eq(auditEvent.entity, 'run'), eq(auditEvent.entityId, String(got[0].run.id))));
		expect(rows.map((r) => r.action)).toEqual(['created']);
		// The same name with another kind would change what the earlier files mean.
		await expectRefused(findOrCreateRun(db, users.designer, pr.projectId, 'sweep 7', 'samples'), 'conflict', /holds iterations/);
		// No kind: the run's own.
		expect((await findOrCreateRun(db, users.designer, pr.projectId, 'sweep 7', null)).run.kind).toBe('iterations');
	});

	it('a samples run names each part from its file, an iterations run keeps one part and stores the iteration', async () => {
		const a = await put({ run: 'family A', kind: 'samples', file: 'Bulb_07 (v2).STL', bytes: sphereStl(0.21) });
		expect(a).toMatchObject({ partSlug: 'bulb-07-v2', outcome: 'created-part', number: 1, run: { name: 'family A', kind: 'samples', created: true } });
		const b = await put({ run: 'family A', file: 'whatever.stl', bytes: sphereStl(0.22), meta: '{"part": "Bulb 08", "seed": 8}' });
		expect(b).toMatchObject({ partSlug: 'bulb-08', outcome: 'created-part', run: { created: false } });
		const [row] = await getDb().select({ meta: revision.meta, runId: revision.runId }).from(revision).where(eq(revision.id, b.revisionId));
		expect(row).toMatchObject({ meta: { part: 'Bulb 08', seed: 8 }, runId: a.run!.id });

		await expectRefused(put({ run: 'opt 1', kind: 'iterations', file: 'it0.stl', bytes: sphereStl(0.2) }), 'invalid', /name the one part/);
		const i0 = await put({ run: 'opt 1', kind: 'iterations', part: 'bulb-opt', file: 'it0.stl', bytes: sphereStl(0.2), meta: '{"iteration": 0}' });
		const i1 = await put({ run: 'opt 1', part: 'bulb-opt', file: 'it1.stl', bytes: sphereStl(0.201), meta: '{"iteration": 1}' });
		expect(i0).toMatchObject({ outcome: 'created-part', iteration: 0 });
		expect(i1).toMatchObject({ outcome: 'new-revision', number: 2, iteration: 1 });
		await expectRefused(put({ run: 'opt 1', part: 'other-bulb', file: 'it2.stl', bytes: sphereStl(0.202), meta: '{"iteration": 2}' }), 'conflict', /iterations of the part "bulb-opt"/);
		// The part's first use is audited once, not on every upload to it.
		const [pa] = await getDb().select({ id: part.id }).from(part).where(eq(part.slug, 'bulb-opt'));
		expect(await getDb().select().from(auditEvent).where(and(eq(auditEvent.entity, 'part'), eq(auditEvent.entityId, String(pa.id)), eq(auditEvent.action, 'created')))).toHaveLength(1);
	});

	it('refuses bad metadata with a clear error and leaves nothing behind', async () => {
		const db = getDb();
		const before = await db.select({ id: revision.id }).from(revision);
		await expectRefused(put({ run: 'bad meta', file: 'x.stl', bytes: sphereStl(0.3), meta: '{"iteration": ' }), 'invalid', /not valid JSON/);
		await expectRefused(put({ run: 'bad meta', file: 'x.stl', bytes: sphereStl(0.3), meta: '[1, 2]' }), 'invalid', /must be a JSON object/);
		await expectRefused(put({ run: 'bad meta', file: 'x.stl', bytes: sphereStl(0.3), meta: '{"iteration": -1}' }), 'invalid', /iteration/);
		await expectRefused(put({ run: 'bad meta', file: 'x.stl', bytes: sphereStl(0.3), meta: '{"iteration": 1.5}' }), 'invalid', /whole number/);
		await expectRefused(put({ run: 'bad meta', file: 'x.stl', bytes: sphereStl(0.3), meta: JSON.stringify({ blob: 'x'.repeat(5000) }) }), 'invalid', /larger than/);
		await expectRefused(put({ run: 'bad meta', kind: 'cycles', file: 'x.stl', bytes: sphereStl(0.3) }), 'invalid', /samples.*iterations/);
		expect(await db.select({ id: revision.id }).from(revision)).toHaveLength(before.length);
		expect(await db.select().from(run).where(eq(run.name, 'bad meta'))).toHaveLength(0);
		// The spooled uploads were removed, not left in the temporary folder.
		expect(readdirSync(spoolDir, { withFileTypes: true }).filter((f) => f.isFile())).toHaveLength(0);
	});

	it('measures the shape distance from the previous iteration when an iteration is checked, and summarises the run', async () => {
		const db = getDb();
		const a = await put({ run: 'dist', kind: 'iterations', part: 'bulb-dist', file: 'a.stl', bytes: sphereStl(0.2), meta: '{"iteration": 4}' });
		const b = await put({ run: 'dist', part: 'bulb-dist', file: 'b.stl', bytes: sphereStl(0.25), meta: '{"iteration": 5}' });
		await drain();
		const [ra] = await db.select({ report: checkRun.report }).from(checkRun).where(eq(checkRun.revisionId, a.revisionId));
		const [rb] = await db.select({ report: checkRun.report }).from(checkRun).where(eq(checkRun.revisionId, b.revisionId));
		expect((JSON.parse(ra.report) as InspectionReport).iterationDistance).toBeUndefined();
		const d = (JSON.parse(rb.report) as InspectionReport).iterationDistance!;
		expect(d).toMatchObject({ previousRevisionId: a.revisionId, previousIteration: 4, error: null });
		// Concentric spheres 0.2 and 0.25 apart by 0.05 (analytic), up to the level-2 icospheres' facets.
		expect(d.hausdorff).toBeGreaterThan(0.04);
		expect(d.hausdorff).toBeLessThan(0.06);
		// The run page reads the copies in narrow columns, not the report.
		const [cols] = await db.select({ h: checkRun.iterationHausdorff, c: checkRun.iterationChamfer, p: checkRun.previousIteration, w: checkRun.wettedArea, f: checkRun.frontalArea, e: checkRun.shortestEdgeCells }).from(checkRun).where(eq(checkRun.revisionId, b.revisionId));
		expect(cols).toMatchObject({ h: d.hausdorff, c: d.chamfer, p: 4 });
		expect(cols.w).toBeGreaterThan(0);
		expect(cols.f).toBeGreaterThan(0);
		expect(cols.e).toBeGreaterThan(0);
		const s = await runSummary(db, await loadRunForUser(db, users.engineer, b.run!.id));
		expect(s).toMatchObject({ name: 'dist', kind: 'iterations', revisions: 2, parts: 1, pending: 0, iterations: { min: 4, max: 5, count: 2 } });
		await expectRefused(loadRunForUser(db, { ...users.engineer, teamId: 9999 }, b.run!.id), 'not-found', /No run/);
	});

	it('sends one digest per run and person once its checks are done and it stayed quiet, exactly once with two senders; single uploads keep their own mail', async () => {
		const db = getDb();
		await sendRunDigests(db, 0); // earlier tests' runs
		const mark = (await db.select({ id: mailOutbox.id }).from(mailOutbox)).reduce((m, r) => Math.max(m, r.id), 0);
		const newMail = async () => (await db.select().from(mailOutbox)).filter((m) => m.id > mark);
		for (let i = 0; i < 3; i++) await put({ run: 'digest run', kind: 'iterations', part: 'bulb-digest', file: `s${i}.stl`, bytes: sphereStl(0.2 + i / 100), meta: JSON.stringify({ iteration: i }) });
		await put({ run: 'digest run', part: 'bulb-digest', file: 't3.stl', bytes: torusStl(0.2), meta: '{"iteration": 3}' });
		// Still awaiting check: not due.
		expect(await sendRunDigests(db, 0)).toBe(0);
		await drain();
		// Checked, but not quiet for the settle time yet.
		expect(await sendRunDigests(db, 60_000)).toBe(0);
		const results = await Promise.all([sendRunDigests(db, 0), sendRunDigests(db, 0)]);
		expect(results.reduce((a, b) => a + b, 0)).toBe(1);
		expect(await sendRunDigests(db, 0)).toBe(0);
		const mail = await newMail();
		expect(mail).toHaveLength(1);
		expect(mail[0].toAddress).toBe('designer@example.test');
		expect(mail[0].subject).toBe('Run "digest run" checked: 4 revisions, 1 held (Keel bulbs)');
		expect(mail[0].textBody).toMatch(/4 revisions of yours: 1 held, 3 clear/);
		expect(mail[0].textBody).toMatch(/rev 4 \(iteration 3\): Expected genus/);
		expect(mail[0].textBody).toMatch(/\/runs\/\d+/);
		// A single upload (no run) that is held keeps its own mail.
		await uploadBytes(db, users.designer, fixture('cube-one-face-missing.stl'), 'open.stl', 'keel-bulbs', 'bulb-single');
		await drain();
		const after = await newMail();
		expect(after).toHaveLength(2);
		expect(after[1].subject).toMatch(/^Held: /);
	});
	it('repairs of a run revision stay in the run; their outcome, the proposals awaiting a reviewer and a later re-check each come in a follow-up digest, once with two senders', async () => {
		const db = getDb();
		await drain();
		await sendRunDigests(db, 0); // earlier tests' runs
		const mark = (await db.select({ id: mailOutbox.id }).from(mailOutbox)).reduce((m, r) => Math.max(m, r.id), 0);
		const newMail = async () => (await db.select().from(mailOutbox)).filter((m) => m.id > mark);
		const a = await put({ run: 'pod repairs', project: 'sensor-pods', file: 'pod-open-a.obj', bytes: variant('tow-body-hole.obj', 'run-a'), meta: '{"iteration": 1, "fin": 0.3}' });
		const b = await put({ run: 'pod repairs', project: 'sensor-pods', file: 'pod-open-b.obj', bytes: variant('tow-body-hole.obj', 'run-b'), meta: '{"iteration": 2}' });
		const c = await put({ run: 'pod repairs', project: 'sensor-pods', file: 'pod-ball.stl', bytes: sphereStl(20), meta: '{"iteration": 3}' });
		const runId = a.run!.id;
		await drain();
		expect(await sendRunDigests(db, 0)).toBe(1);
		const first = await newMail();
		expect(first.map((m) => [m.toAddress, m.subject])).toEqual([['designer@example.test', 'Run "pod repairs" checked: 3 revisions, 2 held (Sensor-pod housings)']]);

		// The reviewer, also an engineer here, repairs one; the engineer then repairs the run's held ones in one go: only the other.
		await db.insert(userRole).values({ userId: users.reviewer.id, role: 'engineer' });
		try {
			const reviewerEngineer = (await loadSessionUser(db, users.reviewer.id))!;
			await proposeRepair(db, reviewerEngineer, a.revisionId, standardRecipe((await loadRevisionForUser(db, reviewerEngineer, a.revisionId)).project.targetCellSize), 'standard');
			await drain();
			expect(await repairBatch(db, users.engineer, 'sensor-pods', null, runId)).toEqual({ queued: 1, skipped: 0 });
			// A repair asked for and not yet stored: the run is not due, though all its revisions are checked.
			expect(await sendRunDigests(db, 0)).toBe(0);
			await drain();
			const repairs = await db
				.select({ id: revision.id, parent: revision.parentRevisionId, runId: revision.runId, iteration: revision.iteration, meta: revision.meta, status: revision.status, uploaderId: revision.uploaderId })
				.from(revision)
				.where(inArray(revision.parentRevisionId, [a.revisionId, b.revisionId]));
			expect(repairs).toHaveLength(2);
			for (const r of repairs) expect(r).toMatchObject({ runId, status: 'repair-proposed', iteration: r.parent === a.revisionId ? 1 : 2 });
			expect(repairs.find((r) => r.parent === a.revisionId)!.meta).toEqual({ iteration: 1, fin: 0.3 });
			expect((await runSummary(db, await loadRunForUser(db, users.engineer, runId))).states['repair-proposed']).toBe(2);
			// Nothing left to repair in the run: both held ones have their repair.
			expect(await repairBatch(db, users.engineer, 'sensor-pods', null, runId)).toEqual({ queued: 0, skipped: 0 });
			// Nor in the project: its batch repair takes only held newest revisions without a repair.
			expect(await countBatchHeld(db, (await loadRunForUser(db, users.engineer, runId)).project.id)).toBe(0);
			expect(await repairBatch(db, users.engineer, 'sensor-pods', null)).toEqual({ queued: 0, skipped: 0 });

			const sent = await Promise.all([sendRunDigests(db, 0), sendRunDigests(db, 0)]);
			expect(sent.reduce((x, y) => x + y, 0)).toBe(1);
			const second = (await newMail()).slice(first.length);
			// No mail of its own for either proposal: one digest each for the two who ran repairs, none for the designer.
			expect(second.map((m) => m.toAddress).sort()).toEqual(['engineer@example.test', 'reviewer@example.test']);
			expect(second.every((m) => m.subject === 'Run "pod repairs" checked: 1 revision, 0 held (Sensor-pod housings)')).toBe(true);
			const toReviewer = second.find((m) => m.toAddress === 'reviewer@example.test')!;
			const theirs = repairs.find((r) => r.uploaderId === users.engineer.id)!;
			// Four-eyes: the reviewer is asked for the engineer's repair, not for their own.
			expect(toReviewer.textBody).toMatch(/1 repair proposal in this run awaits your sign-off/);
			expect(toReviewer.textBody).toContain(`pod open b rev 2 (iteration 2)`);
			expect(toReviewer.textBody).not.toMatch(/• pod open a rev 2/);
			expect(toReviewer.textBody).toContain(`/queue?run=${runId}&status=repair-proposed`);
			expect(second.find((m) => m.toAddress === 'engineer@example.test')!.textBody).not.toMatch(/await/);
			expect(theirs.status).toBe('repair-proposed');
		} finally {
			await db.delete(userRole).where(and(eq(userRole.userId, users.reviewer.id), eq(userRole.role, 'engineer')));
		}

		// A re-check of an already digested revision: a follow-up once it is checked and quiet, exactly once.
		await recheck(db, users.engineer, await loadRevisionForUser(db, users.engineer, c.revisionId));
		expect(await sendRunDigests(db, 0)).toBe(0);
		await drain();
		const again = await Promise.all([sendRunDigests(db, 0), sendRunDigests(db, 0)]);
		expect(again.reduce((x, y) => x + y, 0)).toBe(1);
		expect(await sendRunDigests(db, 0)).toBe(0);
		const third = (await newMail()).slice(first.length + 2);
		expect(third.map((m) => [m.toAddress, m.subject])).toEqual([['designer@example.test', 'Run "pod repairs" checked again: 1 revision, 0 held (Sensor-pod housings)']]);
		expect(third[0].textBody).toMatch(/checked again since the last digest: 1 revision of yours: 1 clear/);
		expect(third[0].textBody).toContain('• pod ball rev 1 (iteration 3): now clear');
	}, 180_000);
});
