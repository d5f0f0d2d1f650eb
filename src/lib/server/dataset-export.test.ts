// The dataset export on the real MariaDB: the manifest lists exactly the signed-off revisions with
// the sha256 of their bytes (hashed here with node:crypto from what was uploaded), the JSON Lines
// hold the same rows, the zip holds exactly those files byte for byte plus both manifests, every
// export leaves its audit rows, and a 1,000-row export sends its first bytes after one page.
import { createHash } from 'node:crypto';
import { mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { and, asc, eq, sql } from 'drizzle-orm';
import { parse } from 'csv-parse/sync';
import { unzipSync } from 'fflate';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getDb } from './db';
import { auditEvent, decision, part, project, revision, run, storedFile, team, user, userRole } from './db/schema';
import { DATASET_COLUMNS, openDatasetExport, resolveDatasetScope, type DatasetFormat, type DatasetScopeInput, type ExportOutcome } from './dataset-export';
import { signOff } from './decisions';
import { ingestRevision } from './ingest';
import { processCheckJob } from './jobs/check';
import { claimJob } from './jobs/queue';
import { loadRevisionForUser } from './revisions';
import { spool } from './storage';
import { useFreshDatabase } from './testing/db';
import { fixture, seededUsers } from './testing/fixtures';
import { loadSessionUser, type SessionUser } from './auth';
import { DomainError } from '../domain-error';
import { RULE_IDS } from '../gate/rules';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
let dataDir = '';
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');
const LIMITS = { timeLimitMs: 60_000, memoryLimitMb: 1024 };

/** What the test uploaded: revision id → the bytes, hashed independently of the app. */
const uploaded = new Map<number, Uint8Array>();
let signedProject: number[] = [];
let signedRun: number[] = [];
let runId = 0;
let n = 0;

/** A closed cube that passes the gate, made distinct by trailing spaces (a different sha256). */
function distinctCube(): Uint8Array {
	return new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + ' '.repeat(++n));
}

async function upload(u: SessionUser, bytes: Uint8Array, partSlug: string, extra: { runId?: number; iteration?: number; meta?: unknown } = {}, projectSlug = 'sensor-pods') {
	const spooled = await spool(Readable.from([Buffer.from(bytes)]), 1 << 30);
	const r = await ingestRevision(getDb(), { user: u, projectSlug, partSlug, fileName: `${partSlug}-${n}.stl`, spooled, source: 'upload', ...extra });
	uploaded.set(r.revisionId, bytes);
	return r.revisionId;
}

async function drain() {
	const db = getDb();
	for (let j = await claimJob(db, 'dataset-test'); j; j = await claimJob(db, 'dataset-test')) await processCheckJob(db, j, 'dataset-test', LIMITS);
}

async function exportOf(u: SessionUser, scope: DatasetScopeInput, format: DatasetFormat, opts: Parameters<typeof openDatasetExport>[4] = {}) {
	let done!: (o: ExportOutcome) => void;
	const outcome = new Promise<ExportOutcome>((r) => (done = r));
	const db = getDb();
	const out = await openDatasetExport(db, u, await resolveDatasetScope(db, u, scope), format, { ...opts, onDone: done });
	return { out, outcome };
}

async function bytesOf(u: SessionUser, scope: DatasetScopeInput, format: DatasetFormat) {
	const { out, outcome } = await exportOf(u, scope, format);
	const body = new Uint8Array(await new Response(out.body).arrayBuffer());
	return { body, out, outcome: await outcome };
}

const csvRows = (text: string) => parse(text, { columns: true, skip_empty_lines: true }) as Record<string, string>[];

beforeAll(async () => {
	dataDir = mkdtempSync(path.join(tmpdir(), 'sg-dataset-'));
	process.env.SHELLGATE_DATA_DIR = dataDir;
	({ drop } = await useFreshDatabase('dataset'));
	const db = getDb();
	users = await seededUsers(db);
	const [p] = await db.select().from(project).where(eq(project.slug, 'sensor-pods'));
	const [r] = await db.insert(run).values({ projectId: p.id, name: 'pod-family-07', kind: 'samples', createdBy: users.designer.id }).$returningId();
	runId = r.id;
	// Sensor pods: two signed off outside any run, two signed off in the run, one left clear (not
	// signed off), one held. Only the four signed-off ones may appear.
	const a = await upload(users.designer, distinctCube(), 'side-scan-pod');
	const b = await upload(users.designer, distinctCube(), 'ctd-pod');
	const c = await upload(users.designer, distinctCube(), 'sample-0001', { runId, iteration: 1, meta: { seed: 11, fineness: 3.5 } });
	const d = await upload(users.designer, distinctCube(), 'sample-0002', { runId, iteration: 2, meta: { seed: 12, fineness: 4.0, note: 'comma, "quote"' } });
	await upload(users.designer, distinctCube(), 'sample-0003', { runId, iteration: 3 });
	await upload(users.designer, fixture('cube-one-face-missing.stl'), 'open-pod');
	await drain();
	for (const id of [a, b, c, d]) await signOff(db, users.reviewer, await loadRevisionForUser(db, users.reviewer, id), 'Cleared for the batch.');
	signedProject = [a, b, c, d];
	signedRun = [c, d];
});
afterAll(() => drop());

describe('the dataset manifest', () => {
	it('lists exactly the signed-off revisions of the project, with the sha256 of their bytes and every gate measure', async () => {
		const db = getDb();
		const states = await db.select({ id: revision.id, status: revision.status }).from(revision);
		expect(states.filter((s) => s.status === 'clear')).toHaveLength(1);
		expect(states.filter((s) => s.status === 'held')).toHaveLength(1);

		const { body, out, outcome } = await bytesOf(users.engineer, { kind: 'project', slugOrId: 'sensor-pods' }, 'csv');
		const text = new TextDecoder().decode(body);
		expect(text.split('\n')[0]).toBe(DATASET_COLUMNS.join(','));
		const rows = csvRows(text);
		expect(rows.map((r) => Number(r.revision_id))).toEqual(signedProject);
		for (const r of rows) {
			expect(r.file_sha256).toBe(sha(uploaded.get(Number(r.revision_id))!));
			expect(Number(r.file_size)).toBe(uploaded.get(Number(r.revision_id))!.length);
			expect(r.download_url).toMatch(new RegExp(`^https?://[^/]+/api/v1/revisions/${r.revision_id}/file$`));
			expect(r.zip_path).toBe(`${r.part}/${r.part}-rev${r.revision}.stl`);
			expect(r.units).toBe('mm');
			expect(r.profile_version).toBe('1');
			expect(r.signed_off_by_email).toBe('reviewer@example.test');
			expect(Date.parse(r.signed_off_at)).toBeGreaterThan(Date.now() - 600_000);
			// The unit cube of the fixture (10 mm sides): figures from the check report.
			expect(r.genus).toBe('0');
			expect(r.shells).toBe('1');
			expect(Number(r.volume)).toBeGreaterThan(0);
			expect(Number(r.wetted_area)).toBeCloseTo(Number(r.surface_area), 6);
			expect(Number(r.frontal_area)).toBeGreaterThan(0);
			for (const id of RULE_IDS) expect(['passed', 'not-checked', 'off']).toContain(r[`rule_${id}`]);
			expect(r.rule_closed).toBe('passed');
			expect(r.rule_closed_measured).not.toBe('');
		}
		// The generator's metadata survives as JSON text, commas and quotes included.
		const d = rows.find((r) => r.part === 'sample-0002')!;
		expect(JSON.parse(d.meta)).toEqual({ seed: 12, fineness: 4.0, note: 'comma, "quote"' });
		expect(d.run_name).toBe('pod-family-07');
		expect(d.iteration).toBe('2');
		expect(rows.find((r) => r.part === 'side-scan-pod')!.run_id).toBe('');

		expect(out.expected).toBe(4);
		expect(outcome).toMatchObject({ status: 'finished', rows: 4, bytes: body.length });
	});

	it('gives the same rows as JSON Lines, numbers as numbers and metadata as JSON', async () => {
		const csv = csvRows(new TextDecoder().decode((await bytesOf(users.reviewer, { kind: 'project', slugOrId: 'sensor-pods' }, 'csv')).body));
		const { body } = await bytesOf(users.reviewer, { kind: 'project', slugOrId: 'sensor-pods' }, 'jsonl');
		const lines = new TextDecoder().decode(body).trimEnd().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>);
		expect(lines).toHaveLength(csv.length);
		lines.forEach((l, i) => {
			expect(Object.keys(l)).toEqual(DATASET_COLUMNS);
			for (const c of DATASET_COLUMNS) {
				const v = l[c];
				const asCsv = v === null ? '' : typeof v === 'object' ? JSON.stringify(v) : String(v);
				expect(asCsv, c).toBe(csv[i][c]);
			}
			expect(typeof l.volume).toBe('number');
		});
	});

	it("scopes a run's export to the run", async () => {
		const rows = csvRows(new TextDecoder().decode((await bytesOf(users.designer, { kind: 'run', id: runId }, 'csv')).body));
		expect(rows.map((r) => Number(r.revision_id))).toEqual(signedRun);
		expect(rows.map((r) => r.iteration)).toEqual(['1', '2']);
	});

	it('records each export in the audit trail: who, scope, format, expected rows, then the rows sent', async () => {
		const db = getDb();
		const before = await db.select({ id: sql<number>`max(${auditEvent.id})` }).from(auditEvent);
		await bytesOf(users.engineer, { kind: 'run', id: runId }, 'jsonl');
		const rowsAfter = await db
			.select()
			.from(auditEvent)
			.where(and(eq(auditEvent.entity, 'run'), eq(auditEvent.entityId, String(runId)), sql`${auditEvent.id} > ${Number(before[0].id)}`))
			.orderBy(asc(auditEvent.id));
		expect(rowsAfter.map((r) => r.action)).toEqual(['dataset-export-started', 'dataset-export-finished']);
		expect(rowsAfter.every((r) => r.actorId === users.engineer.id)).toBe(true);
		const det = (i: number) => (typeof rowsAfter[i].detail === 'string' ? JSON.parse(rowsAfter[i].detail as string) : rowsAfter[i].detail);
		expect(det(0)).toMatchObject({ scope: 'run', runId, runName: 'pod-family-07', format: 'jsonl', expectedRows: 2 });
		expect(det(1)).toMatchObject({ scope: 'run', format: 'jsonl', rows: 2 });
		expect(det(1).bytes).toBeGreaterThan(0);
	});

	it('refuses the admin role, another team, and an unknown run or format, before anything is written', async () => {
		const db = getDb();
		await expect(resolveDatasetScope(db, users.admin, { kind: 'project', slugOrId: 'sensor-pods' })).rejects.toSatisfy((e) => e instanceof DomainError && e.kind === 'forbidden');
		const [t] = await db.insert(team).values({ name: 'Another team' }).$returningId();
		await db.insert(user).values({ id: 'otherteamengineer0001', email: 'engineer@other.example.test', name: 'Other Engineer', teamId: t.id });
		await db.insert(userRole).values({ userId: 'otherteamengineer0001', role: 'engineer' });
		const stranger = (await loadSessionUser(db, 'otherteamengineer0001'))!;
		await expect(resolveDatasetScope(db, stranger, { kind: 'project', slugOrId: 'sensor-pods' })).rejects.toThrow(/No project "sensor-pods" in your team/);
		await expect(resolveDatasetScope(db, stranger, { kind: 'run', id: runId })).rejects.toThrow(new RegExp(`No run ${runId} in your team`));
		await expect(resolveDatasetScope(db, users.engineer, { kind: 'run', id: 999_999 })).rejects.toThrow(/No run 999999/);
		const s = await resolveDatasetScope(db, users.engineer, { kind: 'run', id: runId });
		await expect(openDatasetExport(db, users.engineer, s, 'xlsx' as DatasetFormat)).rejects.toThrow(/use csv, jsonl or zip/);
	});
});

describe('the dataset zip', () => {
	it('holds exactly the signed-off files, byte for byte, and both manifests', async () => {
		const { body, outcome } = await bytesOf(users.engineer, { kind: 'project', slugOrId: 'sensor-pods' }, 'zip');
		const files = unzipSync(body);
		const csv = csvRows(new TextDecoder().decode(files['manifest.csv']));
		expect(csv.map((r) => Number(r.revision_id))).toEqual(signedProject);
		expect(Object.keys(files).sort()).toEqual([...csv.map((r) => r.zip_path), 'manifest.csv', 'manifest.jsonl'].sort());
		for (const r of csv) {
			const original = uploaded.get(Number(r.revision_id))!;
			expect(Buffer.from(files[r.zip_path]).equals(Buffer.from(original)), r.zip_path).toBe(true);
			expect(sha(files[r.zip_path])).toBe(r.file_sha256);
		}
		const jsonl = new TextDecoder().decode(files['manifest.jsonl']).trimEnd().split('\n').map((l) => JSON.parse(l));
		expect(jsonl.map((l) => l.file_sha256)).toEqual(csv.map((r) => r.file_sha256));
		expect(outcome).toMatchObject({ status: 'finished', rows: 4, bytes: body.length });
		expect(readdirSync(path.join(dataDir, 'tmp')).filter((f) => f.startsWith('dataset-'))).toEqual([]);
	});

	it('stops with an error (and an audit row saying so) when a stored file is missing, leaving no temporary files', async () => {
		const db = getDb();
		const [p] = await db.select().from(project).where(eq(project.slug, 'tow-bodies'));
		const [r] = await db.insert(run).values({ projectId: p.id, name: 'missing-file-run', createdBy: users.designer.id }).$returningId();
		const good = await upload(users.designer, distinctCube(), 'missing-file-good', { runId: r.id }, 'tow-bodies');
		await drain();
		await signOff(db, users.reviewer, await loadRevisionForUser(db, users.reviewer, good), null);
		// A second signed-off revision whose bytes the store does not have (written by SQL).
		const ghost = 'f'.repeat(64);
		await db.insert(storedFile).values({ sha256: ghost, size: 10, backend: 'local' });
		const [pa] = await db.select().from(part).where(eq(part.slug, 'missing-file-good'));
		const [src] = await db.select().from(revision).where(eq(revision.id, good));
		const [ins] = await db
			.insert(revision)
			.values({ partId: pa.id, number: 2, sha256: ghost, size: 10, format: 'stl', fileName: 'gone.stl', uploaderId: users.designer.id, source: 'upload', status: 'signed-off', runId: r.id, latestCheckId: src.latestCheckId })
			.$returningId();
		await db.insert(decision).values({ revisionId: ins.id, kind: 'sign-off', byId: users.reviewer.id, fileSha256: ghost });

		const { out, outcome } = await exportOf(users.engineer, { kind: 'run', id: r.id }, 'zip');
		await expect(new Response(out.body).arrayBuffer()).rejects.toBeTruthy();
		const o = await outcome;
		expect(o.status).toBe('failed');
		expect(o.error).toMatch(/stored file of missing-file-good revision 2 .* cannot be read/);
		const [last] = await db.select().from(auditEvent).where(and(eq(auditEvent.entity, 'run'), eq(auditEvent.entityId, String(r.id)))).orderBy(sql`${auditEvent.id} desc`).limit(1);
		expect(last.action).toBe('dataset-export-failed');
		expect(readdirSync(path.join(dataDir, 'tmp')).filter((f) => f.startsWith('dataset-'))).toEqual([]);
	});
});

describe('streaming', () => {
	let bigRun = 0;
	beforeAll(async () => {
		// 1,000 signed-off revisions in one run, written by SQL from one checked and signed-off
		// revision (same bytes, same check), so the export has many pages to read.
		const db = getDb();
		const [p] = await db.select().from(project).where(eq(project.slug, 'tow-bodies'));
		const [r] = await db.insert(run).values({ projectId: p.id, name: 'big-run', createdBy: users.designer.id }).$returningId();
		bigRun = r.id;
		const [src] = await db.select().from(revision).where(eq(revision.id, signedProject[0]));
		const [pa] = await db.insert(part).values({ projectId: p.id, slug: 'big-run-body', name: 'Big run body' }).$returningId();
		await db.execute(sql`
			insert into revision (part_id, number, sha256, size, format, file_name, uploader_id, source, status, run_id, iteration, meta, latest_check_id)
			select ${pa.id}, seq, ${src.sha256}, ${src.size}, 'stl', concat('body-', seq, '.stl'), ${users.designer.id}, 'api', 'signed-off', ${bigRun}, seq, json_object('seq', seq), ${src.latestCheckId}
			from seq_1_to_1000`);
		await db.execute(sql`
			insert into decision (revision_id, kind, by_id, file_sha256, gate_profile_version)
			select id, 'sign-off', ${users.reviewer.id}, sha256, 1 from revision where run_id = ${bigRun}`);
	});

	for (const format of ['csv', 'zip'] as const) {
		it(`sends the first bytes of a 1,000-row ${format} export after reading one or two pages of 100, then all of it`, async () => {
			let pages = 0;
			const { out, outcome } = await exportOf(users.engineer, { kind: 'run', id: bigRun }, format, { pageSize: 100, onPage: () => pages++ });
			const reader = out.body.getReader();
			const first = await reader.read();
			expect(first.done).toBe(false);
			const pagesAtFirstByte = pages;
			expect(pagesAtFirstByte).toBeLessThanOrEqual(2);
			const chunks: Uint8Array[] = [first.value!];
			for (let c = await reader.read(); !c.done; c = await reader.read()) chunks.push(c.value);
			// 10 full pages and the empty one that ends the keyset walk.
			expect(pages).toBe(11);
			const all = Buffer.concat(chunks);
			const manifest = format === 'csv' ? all.toString('utf8') : new TextDecoder().decode(unzipSync(new Uint8Array(all))['manifest.csv']);
			const rows = csvRows(manifest);
			expect(rows).toHaveLength(1000);
			expect(rows[999].iteration).toBe('1000');
			expect(JSON.parse(rows[999].meta)).toEqual({ seq: 1000 });
			expect((await outcome).rows).toBe(1000);
		});
	}

	it('stops reading rows when the download is cancelled, and records it as cancelled', async () => {
		let pages = 0;
		const { out, outcome } = await exportOf(users.engineer, { kind: 'run', id: bigRun }, 'zip', { pageSize: 100, onPage: () => pages++ });
		const reader = out.body.getReader();
		await reader.read();
		await reader.cancel();
		const o = await outcome;
		expect(o.status).toBe('cancelled');
		expect(o.rows).toBeLessThan(1000);
		await new Promise((r) => setTimeout(r, 200));
		expect(pages).toBeLessThan(11);
		expect(readdirSync(path.join(dataDir, 'tmp')).filter((f) => f.startsWith('dataset-'))).toEqual([]);
	});
});
