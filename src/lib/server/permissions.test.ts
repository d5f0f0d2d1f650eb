import { eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PERMISSIONS, type Action } from '../permissions';
import { addComment } from './comments';
import { getDb } from './db';
import { revision, type RevisionState } from './db/schema';
import { processCheckJob } from './jobs/check';
import { claimJob } from './jobs/queue';
import { assignRevision } from './assignment';
import { resolveDatasetScope } from './dataset-export';
import { recheck, returnRevision, signOff } from './decisions';
import { loadRevisionForUser } from './revisions';
import { DomainError } from '../domain-error';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers, uploadBytes } from './testing/fixtures';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
let revId = 0;
let n = 0;

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-perm-'));
	({ drop } = await useFreshDatabase('perm'));
	users = await seededUsers(getDb());
	// One checked revision, uploaded by the designer; each case puts it in the state it needs.
	const db = getDb();
	const up = await uploadBytes(db, users.designer, fixture('cube-closed.stl'), 'pod.stl');
	revId = up.revisionId;
	const j = await claimJob(db, 'perm');
	await processCheckJob(db, j!, 'perm', { timeLimitMs: 60_000, memoryLimitMb: 512 });
});
afterAll(() => drop());

type Role = keyof typeof users;
const ROLES: Role[] = ['admin', 'engineer', 'designer', 'reviewer'];

/** What each action needs to start from, and how to attempt it as a given user. */
const CASES: Record<Exclude<Action, 'read' | 'manage-projects' | 'manage-users' | 'repair'>, { from: RevisionState; run: (r: Role) => Promise<unknown> }> = {
	upload: {
		from: 'clear',
		run: (r) => uploadBytes(getDb(), users[r], new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + ' '.repeat(++n)), `p${n}.stl`)
	},
	comment: { from: 'held', run: (r) => addComment(getDb(), users[r], revId, { body: 'Nose cone looks pinched here.' }) },
	recheck: { from: 'held', run: async (r) => recheck(getDb(), users[r], await loadRevisionForUser(getDb(), users[r], revId)) },
	assign: { from: 'held', run: (r) => assignRevision(getDb(), users[r], [revId], users.engineer.id) },
	return: { from: 'held', run: async (r) => returnRevision(getDb(), users[r], await loadRevisionForUser(getDb(), users[r], revId), 'Cap the open end.') },
	'sign-off': { from: 'clear', run: async (r) => signOff(getDb(), users[r], await loadRevisionForUser(getDb(), users[r], revId), null) },
	'export-dataset': { from: 'signed-off', run: (r) => resolveDatasetScope(getDb(), users[r], { kind: 'project', slugOrId: 'sensor-pods' }) }
};

describe('every role × action pair is allowed or refused as the permission table says', () => {
	for (const [action, c] of Object.entries(CASES)) {
		for (const role of ROLES) {
			const allowed = (PERMISSIONS[action as Action] as readonly string[]).includes(role);
			it(`${role} ${allowed ? 'may' : 'may not'} ${action}`, async () => {
				await getDb().update(revision).set({ status: c.from }).where(eq(revision.id, revId));
				const attempt = c.run(role);
				if (allowed) await expect(attempt).resolves.not.toThrow();
				else await expect(attempt).rejects.toSatisfy((e) => e instanceof DomainError && e.kind === 'forbidden');
			});
		}
	}

	it('matches the roles the product promises (designer uploads and comments; engineer uploads, re-checks, assigns, returns, repairs; reviewer signs off and returns; all three export datasets; admin manages)', () => {
		const roleCan = (role: string) => (Object.keys(PERMISSIONS) as Action[]).filter((a) => (PERMISSIONS[a] as readonly string[]).includes(role)).sort();
		expect(roleCan('designer')).toEqual(['comment', 'export-dataset', 'read', 'upload']);
		expect(roleCan('engineer')).toEqual(['assign', 'comment', 'export-dataset', 'read', 'recheck', 'repair', 'return', 'upload']);
		expect(roleCan('reviewer')).toEqual(['comment', 'export-dataset', 'read', 'return', 'sign-off']);
		expect(roleCan('admin')).toEqual(['manage-projects', 'manage-users', 'read']);
	});
});

describe('four-eyes rule', () => {
	it('refuses a reviewer signing off a revision they uploaded', async () => {
		const db = getDb();
		const both = { ...users.reviewer, roles: [...users.reviewer.roles, 'designer' as const] };
		const up = await uploadBytes(db, both, new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + '\n\n\n'), 'own.stl');
		for (let j = await claimJob(db, 'perm'); j; j = await claimJob(db, 'perm')) await processCheckJob(db, j, 'perm', { timeLimitMs: 60_000, memoryLimitMb: 512 });
		const ctx = await loadRevisionForUser(db, both, up.revisionId);
		expect(ctx.rev.status).toBe('clear');
		await expect(signOff(db, both, ctx, null)).rejects.toThrow(/You uploaded this revision/);
	});
});
