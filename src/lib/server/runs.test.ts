import { mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { getDb } from './db';
import { auditEvent, checkRun, job, mailOutbox, part, revision, run } from './db/schema';
import { processCheckJob } from './jobs/check';
import { claimJob } from './jobs/queue';
import { sendRunDigests } from './run-digest';
import { findOrCreateRun, ingestRunFile, loadRunForUser, runSummary } from './runs';
import { spool } from './storage';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers, uploadBytes } from './testing/fixtures';
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
	for (let j = await claimJob(db, 'w'); j; j = await claimJob(db, 'w')) await processCheckJob(db, j, 'w', LIMITS);
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
});
