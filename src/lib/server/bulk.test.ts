// The queue over newest revisions and bulk decisions, on the real MariaDB: superseded revisions leave
// "Needs action" and say by which revision, the run filter, the page order by age, and bulk actions
// that decide each revision on its own (four-eyes, states and repair limits per revision; refusals
// listed, the rest done).
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bulkSchema } from '../bulk-form';
import { loadSessionUser, type SessionUser } from './auth';
import { assignRevision } from './assignment';
import { bulkAct } from './bulk';
import { getDb } from './db';
import { decision, part, revision, run, team, user, userRole } from './db/schema';
import { ingestRevision } from './ingest';
import { processCheckJob } from './jobs/check';
import { claimJob } from './jobs/queue';
import { processRepairJob } from './jobs/repair';
import { parseQueueFilter, queryQueue } from './queue-view';
import { proposeRepair, standardRecipe } from './repairs';
import { revisionDetail } from './revision-detail';
import { loadRevisionForUser } from './revisions';
import { spool } from './storage';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers, uploadBytes } from './testing/fixtures';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
/** A reviewer who is also an engineer, so can run repairs and then may not sign them off. */
let reviewerEngineer: SessionUser;
const LIMITS = { timeLimitMs: 60_000, memoryLimitMb: 1024 };

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-bulk-'));
	({ drop } = await useFreshDatabase('bulk'));
	const db = getDb();
	users = await seededUsers(db);
	await db.insert(userRole).values({ userId: users.reviewer.id, role: 'engineer' });
	reviewerEngineer = (await loadSessionUser(db, users.reviewer.id))!;
}, 120_000);
afterAll(() => drop());

async function drain() {
	const db = getDb();
	for (let j = await claimJob(db, 'bulk-test'); j; j = await claimJob(db, 'bulk-test')) {
		await (j.kind === 'repair' ? processRepairJob : processCheckJob)(db, j, 'bulk-test', LIMITS);
	}
}
const queue = (u: SessionUser, q: string) => queryQueue(getDb(), u, parseQueueFilter(new URLSearchParams(q)));
const variant = (name: string, tag: string) => new Uint8Array([...fixture(name), ...new TextEncoder().encode(`\n# ${tag}\n`)]);
async function statusOf(id: number) {
	const [r] = await getDb().select({ status: revision.status }).from(revision).where(eq(revision.id, id));
	return r.status;
}

describe('the queue shows the newest revision of each part', () => {
	it('a superseded revision leaves Needs action and its count, and says by which revision when every revision is shown', async () => {
		const db = getDb();
		const first = await uploadBytes(db, users.designer, variant('tow-body-hole.obj', 'a'), 'pod.obj', 'sensor-pods', 'superseded-pod');
		await drain();
		expect(await statusOf(first.revisionId)).toBe('held');
		const before = await queue(users.engineer, 'project=sensor-pods');
		expect(before.rows.map((r) => r.id)).toContain(first.revisionId);
		const heldBefore = before.counts.held;

		const second = await uploadBytes(db, users.designer, variant('cube-regions.obj', 'b'), 'pod.obj', 'sensor-pods', 'superseded-pod');
		await drain();
		const after = await queue(users.engineer, 'project=sensor-pods');
		expect(after.rows.map((r) => r.id)).not.toContain(first.revisionId);
		expect(after.rows.map((r) => r.id)).toContain(second.revisionId);
		expect(after.counts.held).toBe(heldBefore - 1);
		expect(after.rows.find((r) => r.id === second.revisionId)?.supersededBy).toBeNull();
		// The part keeps its newest revision's status beside it (what the counts read).
		const [pa] = await db.select().from(part).where(eq(part.slug, 'superseded-pod'));
		expect(pa.latestRevisionId).toBe(second.revisionId);
		expect(pa.latestStatus).toBe(await statusOf(second.revisionId));

		const all = await queue(users.engineer, 'project=sensor-pods&revisions=all&status=all&pageSize=200');
		const old = all.rows.find((r) => r.id === first.revisionId);
		expect(old?.supersededBy).toEqual({ id: second.revisionId, number: 2 });
		expect((await revisionDetail(db, users.engineer, first.revisionId, { withReport: false })).supersededBy).toEqual({ id: second.revisionId, number: 2 });
		expect((await revisionDetail(db, users.engineer, second.revisionId, { withReport: false })).supersededBy).toBeNull();
	}, 120_000);

	it('pages by age in the direction the links say: age descending is oldest first, the next page newer', async () => {
		const db = getDb();
		const ids: number[] = [];
		for (let i = 0; i < 3; i++) ids.push((await uploadBytes(db, users.designer, variant('cube-regions.obj', `age-${i}`), 'a.obj', 'keel-bulbs', `age-part-${i}`)).revisionId);
		const page = async (q: string) => (await queue(users.engineer, `project=keel-bulbs&status=all&pageSize=1&${q}`)).rows[0]?.id;
		expect(await page('sort=age&dir=desc&page=1')).toBe(ids[0]);
		expect(await page('sort=age&dir=desc&page=2')).toBe(ids[1]);
		expect(await page('sort=age&dir=asc&page=1')).toBe(ids[2]);
		expect(await page('sort=age&dir=asc&page=2')).toBe(ids[1]);
		await drain();
	}, 120_000);

	it('filters by run and names the run in the row', async () => {
		const db = getDb();
		const [proj] = await db.select().from(part).where(eq(part.slug, 'side-scan-pod'));
		const [r] = await db.insert(run).values({ projectId: proj.projectId, name: 'optimiser-run-14', createdBy: users.designer.id }).$returningId();
		const spooled = await spool(Readable.from([Buffer.from(variant('cube-regions.obj', 'run'))]), 1 << 30);
		const inRun = await ingestRevision(db, { user: users.designer, projectSlug: 'sensor-pods', partSlug: 'run-sample-1', fileName: 's1.obj', spooled, source: 'api', runId: r.id, iteration: 3 });
		await uploadBytes(db, users.designer, variant('cube-regions.obj', 'not-in-run'), 'x.obj', 'sensor-pods', 'not-in-run');
		const q = await queue(users.engineer, `run=${r.id}&status=all`);
		expect(q.rows.map((x) => x.id)).toEqual([inRun.revisionId]);
		expect(q.rows[0]).toMatchObject({ runId: r.id, runName: 'optimiser-run-14', iteration: 3 });
		expect(q.total).toBe(1);
		await drain();
	}, 120_000);
});

describe('bulk decisions', () => {
	it('bulk sign-off of repair proposals refuses the ones the reviewer made and lists them, signs off the rest, each on its own', async () => {
		const db = getDb();
		const held: number[] = [];
		for (let i = 0; i < 4; i++) held.push((await uploadBytes(db, users.designer, variant('tow-body-hole.obj', `bulk-${i}`), 'open.obj', 'sensor-pods', `bulk-open-${i}`)).revisionId);
		await drain();
		for (const [i, id] of held.entries()) {
			const by = i < 2 ? reviewerEngineer : users.engineer;
			const ctx = await loadRevisionForUser(db, by, id);
			await proposeRepair(db, by, id, standardRecipe(ctx.project.targetCellSize), 'standard');
		}
		await drain();
		const repairs = await db.select({ id: revision.id, parent: revision.parentRevisionId, status: revision.status, uploaderId: revision.uploaderId, deviation: revision.deviation }).from(revision).where(inArray(revision.parentRevisionId, held));
		expect(repairs.length).toBe(4);
		expect(repairs.every((r) => r.status === 'repair-proposed')).toBe(true);
		// The deviation column is copied out of the repair log when the repair is stored.
		expect(repairs.every((r) => typeof r.deviation === 'number' && r.deviation >= 0)).toBe(true);
		const own = repairs.filter((r) => r.uploaderId === users.reviewer.id).map((r) => r.id);
		const others = repairs.filter((r) => r.uploaderId !== users.reviewer.id).map((r) => r.id);
		expect(own.length).toBe(2);

		const proposals = await queue(users.reviewer, 'status=repair-proposed&sort=deviation&dir=desc&pageSize=200');
		expect(proposals.rows.map((r) => r.id).sort()).toEqual(repairs.map((r) => r.id).sort());
		const devs = proposals.rows.map((r) => r.deviation!);
		expect(devs).toEqual([...devs].sort((a, b) => b - a));

		// One held original (not a proposal any more: it was superseded, but still held) and an id of no revision go in too.
		const input = bulkSchema.parse({ action: 'sign-off', revisionIds: [...repairs.map((r) => r.id), held[0], 99_999_999], note: 'bulk' });
		const res = await bulkAct(db, reviewerEngineer, input);
		expect(res.done.map((d) => d.id).sort()).toEqual(others.sort());
		expect(res.refused.map((d) => d.id).sort((a, b) => a - b)).toEqual([...own, held[0], 99_999_999].sort((a, b) => a - b));
		for (const id of own) expect(res.refused.find((x) => x.id === id)?.reason).toMatch(/You ran this repair; a different reviewer must sign it off/);
		expect(res.refused.find((x) => x.id === held[0])?.reason).toMatch(/"held"/);
		expect(res.refused.find((x) => x.id === 99_999_999)).toMatchObject({ label: 'revision 99999999', reason: expect.stringMatching(/No revision/) });
		expect(res.refused.find((x) => x.id === own[0])?.label).toMatch(/rev 2$/);
		for (const id of others) expect(await statusOf(id)).toBe('signed-off');
		for (const id of own) expect(await statusOf(id)).toBe('repair-proposed');
		const decisions = await db.select().from(decision).where(inArray(decision.revisionId, repairs.map((r) => r.id)));
		expect(decisions.map((d) => d.revisionId).sort()).toEqual(others.sort());
		expect(decisions.every((d) => d.reason === 'bulk' && d.byId === users.reviewer.id)).toBe(true);

		// The other reviewer-capable person (here: a second reviewer) may sign off the rest.
		const [t] = await db.select().from(team).limit(1);
		await db.insert(user).values({ id: 'second-reviewer-0001', email: 'reviewer2@example.test', name: 'Second Reviewer', teamId: t.id });
		await db.insert(userRole).values({ userId: 'second-reviewer-0001', role: 'reviewer' });
		const second = (await loadSessionUser(db, 'second-reviewer-0001'))!;
		const res2 = await bulkAct(db, second, bulkSchema.parse({ action: 'sign-off', revisionIds: own }));
		expect(res2.refused).toEqual([]);
		expect(res2.done.length).toBe(2);
	}, 300_000);

	it('bulk return takes one reason, bulk re-check and assign work per revision, and a role without the permission is refused once', async () => {
		const db = getDb();
		const ids: number[] = [];
		for (let i = 0; i < 3; i++) ids.push((await uploadBytes(db, users.designer, variant('tow-body-hole.obj', `ret-${i}`), 'open.obj', 'tow-bodies', `ret-${i}`)).revisionId);
		await drain();
		expect(bulkSchema.safeParse({ action: 'return', revisionIds: ids }).success).toBe(false);
		expect(bulkSchema.safeParse({ action: 'sign-off', revisionIds: [] }).success).toBe(false);
		await expect(bulkAct(db, users.designer, bulkSchema.parse({ action: 'return', revisionIds: ids, reason: 'x' }))).rejects.toThrow(/do not allow this: return/);

		const assigned = await bulkAct(db, users.engineer, bulkSchema.parse({ action: 'assign', revisionIds: ids, assignee: users.engineer.id }));
		expect(assigned.done.length).toBe(3);
		await expect(bulkAct(db, users.engineer, bulkSchema.parse({ action: 'assign', revisionIds: ids, assignee: 'nobody-here' }))).rejects.toThrow(/in your team/);
		// The single path refuses a stranger, and an engineer of another team, the same way, and changes nothing.
		await expect(assignRevision(db, users.engineer, [ids[0]], 'nobody-here')).rejects.toThrow(/in your team/);
		const [otherTeam] = await db.insert(team).values({ name: 'Harbour survey lab' }).$returningId();
		await db.insert(user).values({ id: 'other-team-engineer-1', email: 'engineer@harbour.example.test', name: 'Other Engineer', teamId: otherTeam.id });
		await expect(assignRevision(db, users.engineer, [ids[0]], 'other-team-engineer-1')).rejects.toThrow(/in your team/);
		const [still] = await db.select({ assigneeId: revision.assigneeId }).from(revision).where(eq(revision.id, ids[0]));
		expect(still.assigneeId).toBe(users.engineer.id);
		expect((await queue(users.engineer, 'assignee=me&project=tow-bodies')).rows.map((r) => r.id).sort()).toEqual([...ids].sort());

		const returned = await bulkAct(db, users.engineer, bulkSchema.parse({ action: 'return', revisionIds: ids.slice(0, 2), reason: 'Close the open face and upload again.' }));
		expect(returned.done.length).toBe(2);
		const rows = await db.select().from(decision).where(inArray(decision.revisionId, ids.slice(0, 2)));
		expect(rows.every((d) => d.kind === 'return' && d.reason === 'Close the open face and upload again.')).toBe(true);

		// Re-check: a returned one may be checked again, one awaiting its check may not.
		const first = await bulkAct(db, users.engineer, bulkSchema.parse({ action: 'recheck', revisionIds: [ids[0]] }));
		expect(first.done.map((d) => d.id)).toEqual([ids[0]]);
		const rechecked = await bulkAct(db, users.engineer, bulkSchema.parse({ action: 'recheck', revisionIds: ids }));
		expect(rechecked.done.map((d) => d.id)).toEqual(ids.slice(1));
		expect(rechecked.refused).toEqual([{ id: ids[0], label: expect.stringMatching(/rev 1$/), reason: expect.stringMatching(/"awaiting check"/) }]);
		expect(await statusOf(ids[2])).toBe('awaiting-check');
		await drain();
		expect(await statusOf(ids[2])).toBe('held');
	}, 300_000);

	it('the severity sort puts the heaviest first and revisions without a finished check last, on every page', async () => {
		const db = getDb();
		await drain();
		await uploadBytes(db, users.designer, variant('cube-regions.obj', 'unchecked'), 'u.obj', 'tow-bodies', 'unchecked-one');
		const all = await queue(users.engineer, 'sort=severity&dir=desc&pageSize=200&status=all');
		const sev = all.rows.map((r) => r.severity ?? -1);
		expect(sev).toEqual([...sev].sort((a, b) => b - a));
		expect(all.rows.at(-1)?.status).toBe('awaiting-check');
		const paged: number[] = [];
		for (let p = 1; p <= Math.ceil(all.total / 3); p++) paged.push(...(await queue(users.engineer, `sort=severity&dir=desc&pageSize=3&status=all&page=${p}`)).rows.map((r) => r.id));
		expect(paged).toEqual(all.rows.map((r) => r.id));
		const asc = await queue(users.engineer, 'sort=severity&dir=asc&pageSize=200&status=all');
		expect(asc.rows.map((r) => r.severity ?? -1)).toEqual([...sev].reverse().sort((a, b) => a - b));
		await drain();
	}, 120_000);
});
