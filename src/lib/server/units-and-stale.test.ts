// The size and units rule through the real jobs on MariaDB: a pod written in metres into a
// millimetre project is held with the ×1000 rescale; the rescale repair makes a new revision that
// passes. Then a new gate profile version marks undecided verdicts stale, and one batch re-checks them.
import { and, desc, eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_GATE_RULES, SIZE_IN_CELLS } from '../gate/profile';
import { implicitMesh } from '../mesh/testing/repair-support';
import { sphere } from '../mesh/testing/implicit-shapes';
import { writeBinaryStl } from '../mesh/write';
import { getDb } from './db';
import { checkRun, gateProfile, mailOutbox, project, revision, ruleResult } from './db/schema';
import { processCheckJob } from './jobs/check';
import { claimJob } from './jobs/queue';
import { processRepairJob } from './jobs/repair';
import { parseQueueFilter, queryQueue } from './queue-view';
import { recheckStale, staleRevisionIds } from './recheck-stale';
import { proposeRepair } from './repairs';
import { loadRevisionForUser } from './revisions';
import { useFreshDatabase } from './testing/db';
import { seededUsers, uploadBytes } from './testing/fixtures';
import { revisionDetail } from './revision-detail';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
let projectId = 0;
const LIMITS = { timeLimitMs: 60_000, memoryLimitMb: 1024 };

async function drain() {
	const db = getDb();
	for (let j = await claimJob(db, 'units-test'); j; j = await claimJob(db, 'units-test')) {
		await (j.kind === 'repair' ? processRepairJob : processCheckJob)(db, j, 'units-test', LIMITS);
	}
}

async function addProfile(rules: object) {
	const db = getDb();
	const [latest] = await db.select().from(gateProfile).where(eq(gateProfile.projectId, projectId)).orderBy(desc(gateProfile.version)).limit(1);
	await db.insert(gateProfile).values({ projectId, version: latest.version + 1, rules, createdBy: users.admin.id });
	return latest.version + 1;
}

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-units-'));
	({ drop } = await useFreshDatabase('units'));
	users = await seededUsers(getDb());
	const [p] = await getDb().select().from(project).where(eq(project.slug, 'sensor-pods'));
	projectId = p.id;
	await addProfile({ ...DEFAULT_GATE_RULES, expectedSize: { ...SIZE_IN_CELLS } });
});
afterAll(() => drop());

describe('size and units through the jobs (1 m = 1000 mm, by definition)', () => {
	let heldId = 0;
	it('holds a 100 mm pod written in metres into the millimetre project and offers ×1000', async () => {
		const db = getDb();
		// A sphere of radius 0.05: 100 mm across when read as metres, 0.1 "mm" when read as millimetres.
		const bytes = writeBinaryStl(implicitMesh(sphere(0.05), 0.01));
		const up = await uploadBytes(db, users.designer, bytes, 'pod-in-metres.stl', 'sensor-pods', 'pod-units');
		await drain();
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('held');
		const [rule] = await db.select().from(ruleResult).where(and(eq(ruleResult.checkRunId, rev.latestCheckId!), eq(ruleResult.rule, 'expected-size')));
		expect(rule.passed).toBe(false);
		expect(rule.measured).toContain('likely ×1,000 (m → mm)');
		const d = await revisionDetail(db, users.engineer, up.revisionId, { withReport: true });
		expect(d.unitFix).toEqual({ factor: 1000, fileUnits: 'm', projectUnits: 'mm' });
		heldId = up.revisionId;
	});

	it('rescales ×1000 into a new revision that passes every rule', async () => {
		const db = getDb();
		await proposeRepair(db, users.engineer, heldId, [{ op: 'rescale', factor: 1000 }], 'rescale ×1000 (m → mm)');
		await drain();
		const [child] = await db.select().from(revision).where(eq(revision.parentRevisionId, heldId));
		expect(child).toBeDefined();
		const [run] = await db.select().from(checkRun).where(eq(checkRun.id, child.latestCheckId!));
		const rules = await db.select().from(ruleResult).where(eq(ruleResult.checkRunId, run.id));
		expect(rules.filter((r) => !r.passed).map((r) => r.rule)).toEqual([]);
		expect(['repair-proposed', 'clear']).toContain(child.status);
	});

	it('marks undecided verdicts stale after a profile change, and re-checks them all under the new version in one action', async () => {
		const db = getDb();
		expect(await staleRevisionIds(db, projectId)).toEqual([]);
		const v = await addProfile({ ...DEFAULT_GATE_RULES, expectedSize: { ...SIZE_IN_CELLS }, expectedGenus: 0 });
		const stale = await staleRevisionIds(db, projectId);
		expect(stale.length).toBe(2);
		const q = await queryQueue(db, users.engineer, parseQueueFilter(new URLSearchParams('status=all&revisions=all&project=sensor-pods&pageSize=200')));
		for (const id of stale) expect(q.rows.find((r) => r.id === id)?.staleProfile).toBe(true);
		const d = await revisionDetail(db, users.engineer, heldId, { withReport: false });
		expect(d.check?.currentProfileVersion).toBe(v);
		expect(d.check?.gateProfileVersion).toBe(v - 1);
		await expect(recheckStale(db, users.designer, 'sensor-pods')).rejects.toThrow(/do not allow/);
		expect(await recheckStale(db, users.engineer, 'sensor-pods')).toEqual({ queued: 2, skipped: 0 });
		await drain();
		expect(await staleRevisionIds(db, projectId)).toEqual([]);
		const ctx = await loadRevisionForUser(db, users.engineer, heldId);
		expect(ctx.rev.status).toBe('held');
	});

	it('with the size rule off, the held mail still names the likely unit mistake after the rules that hold it', async () => {
		const db = getDb();
		await addProfile({ ...DEFAULT_GATE_RULES, expectedSize: null });
		const bytes = writeBinaryStl(implicitMesh(sphere(0.06), 0.01));
		const up = await uploadBytes(db, users.designer, bytes, 'pod-in-metres-2.stl', 'sensor-pods', 'pod-units-off');
		await drain();
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('held');
		const mails = (await db.select().from(mailOutbox)).filter((m) => m.subject.startsWith('Held: ') && m.subject.includes('pod units off'));
		expect(mails).toHaveLength(1);
		expect(mails[0].textBody).toContain('Shortest edge');
		expect(mails[0].textBody).toContain('Also to look at (does not hold on its own) — Size and units');
		expect(mails[0].textBody).toContain('likely ×1,000 (m → mm)');
		expect(mails[0].textBody.indexOf('Shortest edge')).toBeLessThan(mails[0].textBody.indexOf('Also to look at'));
	});
});
