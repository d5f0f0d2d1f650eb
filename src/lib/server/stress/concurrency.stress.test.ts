// Concurrent ingests on the real MariaDB: many first uploads into new parts of one project at once,
// and the same bytes sent several times at once into one new part. Every request must be
// acknowledged (a new revision or a duplicate of one), and every acknowledged revision's bytes must
// be in the store and readable, with exactly one queued check per revision.
import { mkdtempSync } from 'node:fs';
import fs from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getDb } from '../db';
import { job, part, revision } from '../db/schema';
import type { IngestResult } from '../ingest';
import { getStore } from '../storage';
import { useFreshDatabase } from '../testing/db';
import { fixture, seededUsers, uploadBytes } from '../testing/fixtures';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
let dataDir: string;
const ROUNDS = 20;
const figures = { requests: 0, failures: 0, lostFiles: 0, checkJobsWrong: 0 };

beforeAll(async () => {
	dataDir = mkdtempSync(path.join(tmpdir(), 'sg-concurrency-'));
	process.env.SHELLGATE_DATA_DIR = dataDir;
	process.env.STORAGE = 'local';
	({ drop } = await useFreshDatabase('concurrency'));
	users = await seededUsers(getDb());
});
afterAll(async () => {
	console.log(`[stress] concurrent ingest: ${figures.requests} requests, ${figures.failures} failed, ${figures.lostFiles} acknowledged revisions without readable bytes, ${figures.checkJobsWrong} revisions without exactly one check job`);
	await drop();
	await fs.rm(dataDir, { recursive: true, force: true });
});

const base = fixture('cube-regions.obj');
/** The fixture with a trailing comment, so each variant has its own sha256. */
const variant = (tag: string) => new Uint8Array([...base, ...new TextEncoder().encode(`\n# ${tag}\n`)]);

/** Runs the uploads at once; every one must resolve. Then checks bytes and check jobs for each revision. */
async function runAll(uploads: Array<() => Promise<IngestResult>>): Promise<IngestResult[]> {
	figures.requests += uploads.length;
	const settled = await Promise.allSettled(uploads.map((f) => f()));
	const errors = settled.filter((s) => s.status === 'rejected').map((s) => String((s as PromiseRejectedResult).reason?.message ?? s));
	figures.failures += errors.length;
	expect(errors).toEqual([]);
	const results = settled.map((s) => (s as PromiseFulfilledResult<IngestResult>).value);
	const db = getDb();
	const ids = [...new Set(results.map((r) => r.revisionId))];
	const revs = await db.select({ id: revision.id, sha256: revision.sha256 }).from(revision).where(inArray(revision.id, ids));
	expect(revs.length).toBe(ids.length);
	for (const r of revs) {
		const bytes = await getStore()
			.read(r.sha256)
			.catch(() => null);
		if (!bytes || bytes.length === 0) figures.lostFiles++;
		const jobs = await db.select({ id: job.id }).from(job).where(eq(job.revisionId, r.id));
		if (jobs.filter(Boolean).length !== 1) figures.checkJobsWrong++;
	}
	expect(figures.lostFiles).toBe(0);
	expect(figures.checkJobsWrong).toBe(0);
	return results;
}

describe('concurrent ingest', () => {
	it('20 first uploads at once into 20 new parts of one project: all created, numbers start at 1', async () => {
		for (let round = 0; round < ROUNDS; round++) {
			const results = await runAll(Array.from({ length: 20 }, (_, i) => () => uploadBytes(getDb(), users.designer, variant(`r${round}-p${i}`), 'pod.obj', 'sensor-pods', `burst-${round}-${i}`)));
			expect(results.every((r) => r.duplicateOf === null && r.number === 1)).toBe(true);
		}
	}, 300_000);

	it('the same bytes 5 times at once into one new part: one revision, the rest are duplicates of it', async () => {
		for (let round = 0; round < ROUNDS; round++) {
			const bytes = variant(`same-${round}`);
			const results = await runAll(Array.from({ length: 5 }, () => () => uploadBytes(getDb(), users.designer, bytes, 'pod.obj', 'sensor-pods', `same-${round}`)));
			const created = results.filter((r) => r.duplicateOf === null);
			expect(created.length).toBe(1);
			expect(results.every((r) => r.revisionId === created[0].revisionId)).toBe(true);
		}
	}, 300_000);

	it('different bytes at once into one existing part: revision numbers stay unique and dense', async () => {
		const db = getDb();
		for (let round = 0; round < 5; round++) {
			await runAll(Array.from({ length: 10 }, (_, i) => () => uploadBytes(db, users.designer, variant(`dense-${round}-${i}`), 'pod.obj', 'sensor-pods', 'dense-part')));
		}
		const [pa] = await db.select().from(part).where(eq(part.slug, 'dense-part'));
		const numbers = (await db.select({ n: revision.number }).from(revision).where(eq(revision.partId, pa.id))).map((r) => r.n).sort((a, b) => a - b);
		expect(numbers).toEqual(Array.from({ length: 50 }, (_, i) => i + 1));
	}, 300_000);
});
