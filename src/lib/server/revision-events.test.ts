// applyEvent is the only writer of revision.status: a scan of the sources says no other module sets
// it, and the state × event × actor table is run through it on the real MariaDB, with refusals of
// the right kind that leave nothing written.
import { and, eq } from 'drizzle-orm';
import { readdirSync, readFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DomainError } from '../domain-error';
import { REVISION_EVENT_NAMES, REVISION_EVENTS, REVISION_STATES, eventRefusal, type RevisionState } from '../revision-states';
import { getDb } from './db';
import { auditEvent, job, mailOutbox, revision } from './db/schema';
import { processCheckJob } from './jobs/check';
import { claimJob, failAttempt } from './jobs/queue';
import { applyEvent } from './revision-events';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers, uploadBytes } from './testing/fixtures';

const ROOT = path.resolve(__dirname, '../../..');

function sourceFiles(dir: string): string[] {
	const out: string[] = [];
	for (const e of readdirSync(dir, { withFileTypes: true })) {
		const p = path.join(dir, e.name);
		if (e.isDirectory()) out.push(...sourceFiles(p));
		else if (/\.(ts|js|svelte)$/.test(e.name) && !/\.test\.ts$/.test(e.name) && !p.includes(`${path.sep}testing${path.sep}`)) out.push(p);
	}
	return out;
}

/** Every `.update(revision)…set({ … })` in a file whose set object names `status`. */
function statusWrites(text: string): string[] {
	const hits: string[] = [];
	const re = /\.update\(\s*revision\s*\)\s*\.set\(\s*\{/g;
	for (let m = re.exec(text); m; m = re.exec(text)) {
		// The object literal up to its closing brace (set objects here hold no nested braces but spreads of them).
		let depth = 1;
		let i = m.index + m[0].length;
		for (; i < text.length && depth > 0; i++) depth += text[i] === '{' ? 1 : text[i] === '}' ? -1 : 0;
		const body = text.slice(m.index + m[0].length, i - 1);
		if (/(^|[\s,{])status\s*[:,}]|(^|[\s,{])status\s*$/.test(body)) hits.push(body.trim().slice(0, 80));
	}
	return hits;
}

describe('one writer of revision.status', () => {
	it('the scan finds status writes when they are there', () => {
		expect(statusWrites("await tx.update(revision).set({ status: 'checking', updatedAt: now })")).toHaveLength(1);
		expect(statusWrites('db.update(revision)\n\t.set({ updatedAt, status })')).toHaveLength(1);
		expect(statusWrites('db.update(revision).set({ assigneeId, updatedAt: new Date() })')).toHaveLength(0);
		expect(statusWrites("db.update(job).set({ status: 'done' })")).toHaveLength(0);
	});

	it('no module but revision-events.ts sets revision.status (src/ and scripts/, tests excepted)', () => {
		const offenders: string[] = [];
		let owner = 0;
		for (const f of [...sourceFiles(path.join(ROOT, 'src')), ...sourceFiles(path.join(ROOT, 'scripts'))]) {
			const hits = statusWrites(readFileSync(f, 'utf8'));
			if (path.relative(ROOT, f) === path.join('src', 'lib', 'server', 'revision-events.ts')) owner = hits.length;
			else for (const h of hits) offenders.push(`${path.relative(ROOT, f)}: ${h}`);
		}
		expect(offenders).toEqual([]);
		expect(owner).toBe(1);
	});
});

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
let n = 0;

beforeAll(async () => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-events-'));
	({ drop } = await useFreshDatabase('events'));
	users = await seededUsers(getDb());
});
afterAll(() => drop());

/** A fresh revision of its own (distinct bytes), with its check job closed, put straight into `state`. */
async function revisionIn(state: RevisionState): Promise<number> {
	const db = getDb();
	const bytes = new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + ' '.repeat(++n));
	const up = await uploadBytes(db, users.designer, bytes, `ev-${n}.stl`, 'sensor-pods', `events-${n}`);
	await db.update(job).set({ status: 'done' }).where(eq(job.revisionId, up.revisionId));
	// Test set-up only: the state under test is written directly.
	await db.update(revision).set({ status: state }).where(eq(revision.id, up.revisionId));
	return up.revisionId;
}

async function rowOf(id: number) {
	const [r] = await getDb().select().from(revision).where(eq(revision.id, id));
	const audits = await getDb().select().from(auditEvent).where(and(eq(auditEvent.entity, 'revision'), eq(auditEvent.entityId, String(id))));
	return { status: r.status, reason: r.statusReason, audits: audits.length };
}

describe('applyEvent over every state × event × actor', () => {
	const ACTORS = ['admin', 'engineer', 'designer', 'reviewer', 'system'] as const;
	it('allows exactly what the table allows, and refuses the rest with the right kind and nothing written', async () => {
		const db = getDb();
		const tally = { allowed: 0, forbidden: 0, conflict: 0 };
		// One revision per state, moved back to its state after each allowed event.
		const ids = Object.fromEntries(await Promise.all(REVISION_STATES.map(async (s) => [s, await revisionIn(s)] as const))) as Record<RevisionState, number>;
		for (const state of REVISION_STATES) {
			const id = ids[state];
			for (const event of REVISION_EVENT_NAMES) {
				for (const who of ACTORS) {
					const rule = REVISION_EVENTS[event];
					const expected = who === 'system' ? (rule.permission !== null ? 'forbidden' : (rule.from as readonly string[]).includes(state) ? null : 'conflict') : eventRefusal(users[who], state, event);
					const before = await rowOf(id);
					const got = await applyEvent(db, id, event, { actor: who === 'system' ? null : users[who], reason: event === 'return' ? 'Cap the open end.' : null }).then(
						(r) => r,
						(e: unknown) => e
					);
					const what = `${who} · ${event} from ${state}`;
					if (expected === null) {
						expect(got, what).toEqual({ from: state, to: rule.to });
						const after = await rowOf(id);
						expect(after.status, what).toBe(rule.to);
						expect(after.audits, what).toBe(before.audits + 1);
						await db.update(revision).set({ status: state }).where(eq(revision.id, id));
						tally.allowed++;
					} else {
						expect(got, what).toBeInstanceOf(DomainError);
						expect((got as DomainError).kind, what).toBe(expected);
						expect(await rowOf(id), what).toEqual(before);
						tally[expected]++;
					}
				}
			}
		}
		console.log(`[events] ${REVISION_STATES.length} states × ${REVISION_EVENT_NAMES.length} events × ${ACTORS.length} actors: ${tally.allowed} allowed, ${tally.forbidden} forbidden, ${tally.conflict} conflict`);
		expect(tally.allowed + tally.forbidden + tally.conflict).toBe(REVISION_STATES.length * REVISION_EVENT_NAMES.length * ACTORS.length);
	});

	it('an unknown revision is not-found', async () => {
		await expect(applyEvent(getDb(), 99_999_999, 'recheck', { actor: users.engineer })).rejects.toMatchObject({ kind: 'not-found' });
	});

	it('a failure in the event’s own writes leaves status, audit row and mail unwritten', async () => {
		const db = getDb();
		const id = await revisionIn('held');
		const before = await rowOf(id);
		const mails = (await db.select().from(mailOutbox)).length;
		await expect(
			applyEvent(db, id, 'return', {
				actor: users.engineer,
				reason: 'Cap the open end.',
				after: async () => {
					throw new DomainError('invalid', 'refused half-way');
				}
			})
		).rejects.toMatchObject({ kind: 'invalid' });
		expect(await rowOf(id)).toEqual(before);
		expect((await db.select().from(mailOutbox)).length).toBe(mails);
	});

	it('queues the event’s mail with it: a return tells the uploader', async () => {
		const db = getDb();
		const id = await revisionIn('clear');
		const mails = (await db.select().from(mailOutbox)).length;
		await applyEvent(db, id, 'return', { actor: users.reviewer, reason: 'Nose cone is pinched.' });
		const out = await db.select().from(mailOutbox);
		expect(out.length).toBe(mails + 1);
		expect(JSON.stringify(out.at(-1))).toContain('Nose cone is pinched.');
	});
});

describe('the check worker moves revisions only through applyEvent', () => {
	it('claim, check and result: check-started then checked, by no user, with the check run set', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, fixture('cube-one-face-missing.stl'), 'open.stl', 'sensor-pods', 'events-open');
		const j = await claimJob(db, 'ev-worker');
		expect(j?.revisionId).toBe(up.revisionId);
		expect((await rowOf(up.revisionId)).status).toBe('checking');
		expect(await processCheckJob(db, j!, 'ev-worker', { timeLimitMs: 60_000, memoryLimitMb: 512 })).toBe('done');
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		expect(rev.status).toBe('held');
		expect(rev.latestCheckId).not.toBeNull();
		const audits = await db.select().from(auditEvent).where(and(eq(auditEvent.entity, 'revision'), eq(auditEvent.entityId, String(up.revisionId))));
		expect(audits.map((a) => [a.action, a.fromState, a.toState, a.actorId])).toEqual([
			['uploaded', null, 'awaiting-check', users.designer.id],
			['check-started', 'awaiting-check', 'checking', null],
			['checked', 'checking', 'held', null]
		]);
		// The held mail goes to the designer in the same transaction.
		expect(JSON.stringify(await db.select().from(mailOutbox))).toContain('Held:');
	});

	it('a failed attempt out of attempts ends check-incomplete; a failure for a revision moved on meanwhile leaves it as it is', async () => {
		const db = getDb();
		const up = await uploadBytes(db, users.designer, new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + '\t'.repeat(7)), 'crash.stl', 'sensor-pods', 'events-crash');
		await db.update(job).set({ maxAttempts: 1 }).where(eq(job.revisionId, up.revisionId));
		const j = await claimJob(db, 'ev-crash');
		expect(j?.revisionId).toBe(up.revisionId);
		await failAttempt(db, j!.id, 'ev-crash', 'The worker stopped answering.', 'retry');
		expect(await rowOf(up.revisionId)).toMatchObject({ status: 'check-incomplete', reason: expect.stringMatching(/gave up after 1 attempts/) });

		const other = await revisionIn('awaiting-check');
		await db.update(job).set({ status: 'queued' }).where(eq(job.revisionId, other));
		const k = await claimJob(db, 'ev-late');
		expect(k?.revisionId).toBe(other);
		// Test set-up only: as if the revision had been decided while the check ran.
		await db.update(revision).set({ status: 'signed-off' }).where(eq(revision.id, other));
		await failAttempt(db, k!.id, 'ev-late', 'The file cannot be read.', 'unreadable');
		expect((await rowOf(other)).status).toBe('signed-off');
		const [kj] = await db.select().from(job).where(eq(job.id, k!.id));
		expect(kj.status).toBe('failed');
	});
});

describe('a check job whose revision moved on', () => {
	it('is closed when claimed, leaves the revision as it is, and does not block the jobs behind it', async () => {
		const db = getDb();
		const stale = await revisionIn('signed-off');
		await db.update(job).set({ status: 'queued' }).where(eq(job.revisionId, stale));
		const up = await uploadBytes(db, users.designer, new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + '\r\n'.repeat(5)), 'next.stl', 'sensor-pods', 'events-next');
		const j = await claimJob(db, 'ev-stale');
		expect(j?.revisionId).toBe(up.revisionId);
		expect((await rowOf(stale)).status).toBe('signed-off');
		const [sj] = await db.select().from(job).where(eq(job.revisionId, stale));
		expect(sj.status).toBe('failed');
		expect(sj.lastError).toMatch(/signed off/);
	});
});
