// Repair limits end to end on the real MariaDB: a repair that removes most of a part is held with
// each measure against its limit, and its sign-off needs an override with a reason; a repair that
// changes nothing makes no revision.
import { eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readMesh } from '../mesh/read';
import { writeBinaryStl } from '../mesh/write';
import { clearanceRecord } from './clearance';
import { getDb } from './db';
import { decision, job, revision } from './db/schema';
import { processCheckJob } from './jobs/check';
import { claimJob } from './jobs/queue';
import { processRepairJob } from './jobs/repair';
import { proposeRepair } from './repairs';
import { signOff } from './decisions';
import { loadRevisionForUser } from './revisions';
import { DomainError } from '../domain-error';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers, uploadBytes } from './testing/fixtures';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
const LIMITS = { timeLimitMs: 60_000, memoryLimitMb: 1024 };

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-rlimits-'));
	({ drop } = await useFreshDatabase('rlimits'));
	users = await seededUsers(getDb());
});
afterAll(() => drop());

async function drain() {
	const db = getDb();
	for (let j = await claimJob(db, 'rl-test'); j; j = await claimJob(db, 'rl-test')) {
		await (j.kind === 'repair' ? processRepairJob : processCheckJob)(db, j, 'rl-test', LIMITS);
	}
}

/** Three equal closed cubes side by side, as one STL. */
function threeCubes(): Uint8Array {
	const cube = readMesh(fixture('cube-closed.stl'), 'cube.stl');
	const n = cube.positions.length / 3, f = cube.indices.length;
	const positions = new Float64Array(cube.positions.length * 3);
	const indices = new Uint32Array(f * 3);
	for (let c = 0; c < 3; c++) {
		for (let i = 0; i < cube.positions.length; i++) positions[c * cube.positions.length + i] = cube.positions[i] + (i % 3 === 0 ? c * 100 : 0);
		for (let i = 0; i < f; i++) indices[c * f + i] = cube.indices[i] + c * n;
	}
	return writeBinaryStl({ positions, indices });
}

async function signOffError(revId: number, override: { reason: string } | null) {
	const db = getDb();
	try {
		await signOff(db, users.reviewer, await loadRevisionForUser(db, users.reviewer, revId), null, override);
		return null;
	} catch (e) {
		if (e instanceof DomainError) return e;
		throw e;
	}
}

describe('repair limits', () => {
	it('holds a repair that removes most of a part, refuses its sign-off without an override, accepts it with one', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, threeCubes(), 'pod-three.stl');
		await drain();
		// Removes two of three equal bodies: faces, area and volume all −66.7 %.
		await proposeRepair(db, users.engineer, up.revisionId, [{ op: 'remove-small-shells', maxAreaShare: 0.34 }], 'drop bodies');
		await drain();
		const [rep] = await db.select().from(revision).where(eq(revision.parentRevisionId, up.revisionId));
		expect(rep.status).toBe('held');
		expect(rep.statusReason).toMatch(/volume -66\.67 % against a limit of ±1 %/);
		expect(rep.statusReason).toMatch(/area -66\.67 % against a limit of ±5 %/);
		expect(rep.statusReason).toMatch(/faces 36 → 12 \(-66\.67 %\) against a limit of ±50 %/);

		const refused = await signOffError(rep.id, null);
		expect(refused?.kind).toBe('conflict');
		expect(refused?.message).toMatch(/needs an explicit override with a reason/);
		expect((await db.select().from(decision).where(eq(decision.revisionId, rep.id))).length).toBe(0);

		expect(await signOffError(rep.id, { reason: 'the two spare bodies were fixtures, not part of the pod' })).toBeNull();
		const [d] = await db.select().from(decision).where(eq(decision.revisionId, rep.id));
		expect(d.overrideReason).toBe('the two spare bodies were fixtures, not part of the pod');
		const rec = await clearanceRecord(db, users.reviewer, rep.id);
		expect(rec.override).toEqual({ reason: 'the two spare bodies were fixtures, not part of the pod' });
		expect(rec.parent).toMatchObject({ id: up.revisionId, number: 1, uploadedBy: users.designer.name });
		expect(rec.project).toMatchObject({ units: 'mm', targetCellSize: expect.any(Number) });
		expect(rec.repair?.steps).toHaveLength(1);
		expect(rec.repair?.limits?.within).toBe(false);
		expect(rec.repair?.limits?.lines.map((l) => l.measure)).toEqual(['volume', 'area', 'faces', 'deviation']);
		expect(rec.signedOffBy.name).toBe(users.reviewer.name);
		expect(rec.gateProfileVersion).toBe(1);
		expect(rec.profileNote).toBeNull();
	});

	it('makes no revision for a repair that changes nothing, and says so', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-closed.stl'), 'pod-clean.stl', 'sensor-pods', 'ctd-pod');
		await drain();
		await proposeRepair(db, users.engineer, up.revisionId, [{ op: 'orient' }], 'orient only');
		await drain();
		expect(await db.select().from(revision).where(eq(revision.parentRevisionId, up.revisionId))).toEqual([]);
		const jobs = await db.select().from(job).where(eq(job.revisionId, up.revisionId));
		const rj = jobs.find((x) => x.kind === 'repair')!;
		expect(rj.status).toBe('done');
		expect((rj.payload as { nothingToChange: string }).nothingToChange).toMatch(/^nothing to change: the orient only recipe left the mesh exactly as it was/);
	});
});
