// Hostile uploads on the real MariaDB: names with paths and control characters, files that are not
// meshes, an endless body over the limit, a body cut off half-way, a store that fails its write.
// After each refusal nothing may be left behind: no temporary file, no stored file, no row.
import { mkdtempSync, readdirSync } from 'node:fs';
import fs from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkConsistency } from '../consistency';
import { getDb } from '../db';
import { job, revision, storedFile } from '../db/schema';
import { ingestRevision } from '../ingest';
import { DomainError } from '../../domain-error';
import { httpStatus } from '../errors';
import { getStore, spool } from '../storage';
import { useFreshDatabase } from '../testing/db';
import { fixture, seededUsers, uploadBytes } from '../testing/fixtures';
import { receiveMultipart } from '../upload';

let drop: () => Promise<void>;
let users: Awaited<ReturnType<typeof seededUsers>>;
let dataDir: string;
const refused: string[] = [];

beforeAll(async () => {
	dataDir = mkdtempSync(path.join(tmpdir(), 'sg-upload-stress-'));
	process.env.SHELLGATE_DATA_DIR = dataDir;
	process.env.STORAGE = 'local';
	({ drop } = await useFreshDatabase('uploadstress'));
	users = await seededUsers(getDb());
});
afterAll(async () => {
	console.log(`[stress] uploads: ${refused.length} hostile inputs refused cleanly: ${refused.join('; ')}`);
	await drop();
	await fs.rm(dataDir, { recursive: true, force: true });
});

const tmpFiles = () => {
	try {
		return readdirSync(path.join(dataDir, 'tmp'));
	} catch {
		return [];
	}
};

async function rowCounts() {
	const db = getDb();
	const [r] = await db.select({ n: count() }).from(revision);
	const [f] = await db.select({ n: count() }).from(storedFile);
	const [j] = await db.select({ n: count() }).from(job);
	return { revisions: r.n, files: f.n, jobs: j.n };
}

async function storedShas(): Promise<string[]> {
	const out: string[] = [];
	for await (const s of getStore().list()) out.push(s);
	return out;
}

/** Expects the upload to be refused with `status`, and leaves the database, store and tmp dir as they were. */
async function expectRefusedCleanly(what: string, status: number, message: RegExp, run: () => Promise<unknown>) {
	const before = await rowCounts();
	const filesBefore = await storedShas();
	const err = await run().then(
		() => null,
		(e: unknown) => e
	);
	expect(err, what).toBeInstanceOf(DomainError);
	expect(httpStatus(err as DomainError), what).toBe(status);
	expect((err as DomainError).message, what).toMatch(message);
	expect(await rowCounts(), what).toEqual(before);
	expect((await storedShas()).sort(), what).toEqual(filesBefore.sort());
	expect(tmpFiles(), what).toEqual([]);
	refused.push(`${what} → ${status}`);
}

const BOUNDARY = 'shellgate-stress-boundary';

function multipartHead(fileName: string): Buffer {
	return Buffer.from(`--${BOUNDARY}\r\nContent-Disposition: form-data; name="file"; filename="${fileName}"\r\nContent-Type: application/octet-stream\r\n\r\n`);
}

function multipartRequest(body: ReadableStream<Uint8Array>, headers: Record<string, string> = {}): Request {
	return new Request('http://127.0.0.1/api/v1/projects/sensor-pods/parts/side-scan-pod/revisions', {
		method: 'POST',
		body,
		headers: { 'content-type': `multipart/form-data; boundary=${BOUNDARY}`, ...headers },
		duplex: 'half'
	} as RequestInit);
}

describe('hostile uploads', () => {
	it('keeps only the last path segment of a name with a path in it', async () => {
		const db = getDb();
		const stl = fixture('cube-closed.stl');
		const a = await uploadBytes(db, users.designer, stl, '../../x.stl');
		const b = await uploadBytes(db, users.designer, new Uint8Array([...stl.subarray(0, 80), ...stl.subarray(80)].map((v, i) => (i === 0 ? 33 : v))), '..\\..\\windows\\evil.stl');
		const c = await uploadBytes(db, users.designer, new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + '\n'), '/etc/passwd/.hidden.stl');
		const names = await Promise.all([a, b, c].map(async (r) => (await db.select().from(revision).where(eq(revision.id, r.revisionId)))[0].fileName));
		expect(names).toEqual(['x.stl', 'evil.stl', 'hidden.stl']);
		for (const n of names) expect(n).not.toMatch(/[/\\]|^\./);
		refused.push('3 path names stripped to their last segment');
	});

	it('drops control characters from a name', async () => {
		const db = getDb();
		const bytes = new TextEncoder().encode(new TextDecoder().decode(fixture('cube-closed-ascii.stl')) + '\n\n');
		const r = await uploadBytes(db, users.designer, bytes, 'pod\u0000\r\n\u001b[31mred\u007f.stl');
		const [row] = await db.select().from(revision).where(eq(revision.id, r.revisionId));
		expect(row.fileName).toBe('pod[31mred.stl');
		expect(row.fileName).not.toMatch(/[\u0000-\u001f\u007f]/);
		refused.push('control characters dropped from a name');
	});

	it('refuses HTML, script, SVG, zip and gzip files named as meshes, storing nothing', async () => {
		const db = getDb();
		const cases: [string, string, Uint8Array][] = [
			['HTML named .stl', 'pod.stl', new TextEncoder().encode('<!DOCTYPE html><html><script>alert(1)</script></html>')],
			['script named .stl', 'pod.stl', new TextEncoder().encode('   <script>fetch("/api/v1/queue")</script>')],
			['SVG named .obj', 'pod.obj', new TextEncoder().encode('<svg onload="alert(1)"></svg>')],
			['XML named .ply', 'pod.ply', new TextEncoder().encode('<?xml version="1.0"?><x/>')]
		];
		// A zip-bomb-like file: a local zip header, then a megabyte of zeros (what a bomb expands from).
		const zip = new Uint8Array(1024 * 1024);
		zip.set([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x00, 0x00, 0x08, 0x00]);
		cases.push(['zip-bomb-like renamed .ply', 'bulb.ply', zip]);
		const gz = new Uint8Array(4096);
		gz.set([0x1f, 0x8b, 0x08, 0x00]);
		cases.push(['gzip renamed .stl', 'bulb.stl', gz]);
		cases.push(['PLY content named .obj', 'pod.obj', fixture('cube-quads.ply')]);
		cases.push(['empty .stl', 'pod.stl', new Uint8Array(0)]);
		cases.push(['no mesh extension', 'pod.exe', fixture('cube-closed.stl')]);
		for (const [what, name, bytes] of cases) {
			await expectRefusedCleanly(what, 400, /./, () => uploadBytes(db, users.designer, bytes, name));
		}
	});

	it('refuses an endless body as soon as it passes the limit, then drains it for a bounded time before cutting it off', async () => {
		const limit = 256 * 1024;
		let pulled = 0;
		let cancelledAt = 0;
		const chunk = new Uint8Array(16 * 1024).fill(0x20);
		let sentHead = false;
		const endless = new ReadableStream<Uint8Array>({
			async pull(c) {
				if (!sentHead) {
					sentHead = true;
					c.enqueue(multipartHead('huge.stl'));
					return;
				}
				pulled += chunk.length;
				// Paced like a network: a chunk per tick, not a busy loop.
				await new Promise((r) => setImmediate(r));
				c.enqueue(chunk);
			},
			cancel() {
				cancelledAt = Date.now();
			}
		});
		let atRefusal = 0;
		let refusedAt = 0;
		const drainMs = 400;
		await expectRefusedCleanly('endless body over a 256 KB limit', 413, /upload limit/, () =>
			receiveMultipart(multipartRequest(endless), limit, drainMs).finally(() => {
				atRefusal = pulled;
				refusedAt = Date.now();
			})
		);
		// Stream buffering may pull a few chunks ahead; the refusal must not wait for "endless".
		expect(atRefusal).toBeLessThan(limit + 1024 * 1024);
		// After the refusal the rest is still read (a client that is still sending must get the answer,
		// not a reset), and a client that never stops is cut off once the drain time has passed.
		await new Promise((r) => setTimeout(r, drainMs / 2));
		expect(cancelledAt).toBe(0);
		expect(pulled).toBeGreaterThan(atRefusal);
		await expect.poll(() => cancelledAt, { timeout: 10_000 }).toBeGreaterThan(0);
		expect(cancelledAt - refusedAt).toBeGreaterThanOrEqual(drainMs - 50);
	});

	it('refuses a declared length over the limit before reading any byte', async () => {
		let pulled = 0;
		const body = new ReadableStream<Uint8Array>({
			pull(c) {
				pulled++;
				c.enqueue(new Uint8Array(1024));
			}
		});
		await expectRefusedCleanly('declared length 10 GB', 413, /upload limit/, () => receiveMultipart(multipartRequest(body, { 'content-length': String(10 * 1024 ** 3) }), 1024 * 1024));
		expect(pulled).toBeLessThanOrEqual(1);
	});

	it('leaves nothing behind when the body is cut off half-way', async () => {
		const stl = fixture('cube-closed.stl');
		let step = 0;
		const cut = new ReadableStream<Uint8Array>({
			pull(c) {
				step++;
				if (step === 1) c.enqueue(multipartHead('cut.stl'));
				else if (step < 20) c.enqueue(stl);
				else c.error(new Error('connection reset by peer'));
			}
		});
		await expectRefusedCleanly('body cut off half-way', 400, /interrupted|malformed/, () => receiveMultipart(multipartRequest(cut), 1024 * 1024));
	});

	it('refuses a malformed multipart body and a wrong content type with a 4xx', async () => {
		const garbage = new ReadableStream<Uint8Array>({
			start(c) {
				c.enqueue(new TextEncoder().encode('this is not multipart at all'));
				c.close();
			}
		});
		const res = await receiveMultipart(multipartRequest(garbage), 1024 * 1024).then(
			(r) => r,
			(e: DomainError) => e
		);
		// Busboy ends without a file part here; the route then answers 400 "No file".
		if (res instanceof DomainError) expect(httpStatus(res)).toBeLessThan(500);
		else expect(res.files).toEqual([]);
		const wrongType = new Request('http://127.0.0.1/x', { method: 'POST', body: 'x', headers: { 'content-type': 'text/plain' } });
		await expectRefusedCleanly('text/plain body', 415, /multipart/, () => receiveMultipart(wrongType, 1024));
		const noBoundary = new Request('http://127.0.0.1/x', { method: 'POST', body: 'x', headers: { 'content-type': 'multipart/form-data' } });
		await expectRefusedCleanly('multipart without boundary', 400, /boundary/, () => receiveMultipart(noBoundary, 1024));
		expect(tmpFiles()).toEqual([]);
	});

	it("refuses an upload to another team's project, and by a reviewer, storing nothing", async () => {
		const db = getDb();
		const spoolIt = () => spool(Readable.from([Buffer.from(fixture('pentagon-prism.obj'))]), 1 << 20);
		await expectRefusedCleanly('unknown project slug', 404, /No project/, async () =>
			ingestRevision(db, { user: users.designer, projectSlug: 'no-such-project', partSlug: 'p', fileName: 'p.obj', spooled: await spoolIt(), source: 'upload' })
		);
		await expectRefusedCleanly('reviewer uploading', 403, /do not allow/, async () =>
			ingestRevision(db, { user: users.reviewer, projectSlug: 'sensor-pods', partSlug: 'p', fileName: 'p.obj', spooled: await spoolIt(), source: 'upload' })
		);
		const otherTeam = { ...users.designer, id: users.designer.id, teamId: users.designer.teamId + 1000 };
		await expectRefusedCleanly("another team's project", 404, /in your team/, async () =>
			ingestRevision(db, { user: otherTeam, projectSlug: 'sensor-pods', partSlug: 'p', fileName: 'p.obj', spooled: await spoolIt(), source: 'upload' })
		);
		await expectRefusedCleanly('part slug with a path', 400, /part name/, async () =>
			ingestRevision(db, { user: users.designer, projectSlug: 'sensor-pods', partSlug: '../../etc', fileName: 'p.obj', spooled: await spoolIt(), source: 'upload' })
		);
	});
});

describe('a failing file store', () => {
	it('refuses the upload with 503 and leaves no row pointing at a missing file', async () => {
		const db = getDb();
		const store = getStore();
		const original = store.putFile.bind(store);
		store.putFile = async () => {
			throw Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' });
		};
		try {
			await expectRefusedCleanly('store write fails (ENOSPC)', 503, /file store/, () => uploadBytes(db, users.designer, fixture('tow-body-hole.obj'), 'tow.obj', 'tow-bodies', 'mag-tow-body'));
		} finally {
			store.putFile = original;
		}
		const c = await checkConsistency(db, store);
		expect(c.missingFiles).toEqual([]);
		expect(c.orphanFiles).toEqual([]);
		// The store works again: the same upload now goes through.
		const ok = await uploadBytes(db, users.designer, fixture('tow-body-hole.obj'), 'tow.obj', 'tow-bodies', 'mag-tow-body');
		expect(ok.status).toBe('awaiting-check');
	});

	it('removes the stored bytes when the database write after them fails', async () => {
		const db = getDb();
		const before = await storedShas();
		const spooled = await spool(Readable.from([Buffer.from(fixture('cube-unwelded-sides.obj'))]), 1 << 20);
		// A note that is not a string makes the revision insert fail inside the transaction.
		const err = await ingestRevision(db, { user: users.designer, projectSlug: 'sensor-pods', partSlug: 'ctd-pod', fileName: 'u.obj', spooled, source: 'upload', note: { bad: true } as unknown as string }).catch((e) => e);
		expect(err).toBeInstanceOf(Error);
		expect((await storedShas()).sort()).toEqual(before.sort());
		expect(tmpFiles()).toEqual([]);
		refused.push('database write failing after the file was stored → file removed');
	});
});

describe('checkConsistency', () => {
	it('finds a row whose file is missing and a file no row refers to', async () => {
		const db = getDb();
		const store = getStore();
		expect(await checkConsistency(db, store)).toMatchObject({ missingFiles: [], orphanFiles: [] });
		const up = await uploadBytes(db, users.designer, new TextEncoder().encode(new TextDecoder().decode(fixture('cube-regions.obj')) + '\n# lost\n'), 'lost.obj', 'tow-bodies', 'ring-wing-body');
		const [rev] = await db.select().from(revision).where(eq(revision.id, up.revisionId));
		await store.delete(rev.sha256);
		const stray = await spool(Readable.from([Buffer.from('stray bytes no row names')]), 1024);
		await store.putFile(stray.tmpPath, stray.sha256, stray.size);
		const c = await checkConsistency(db, store);
		expect(c.missingFiles).toEqual([rev.sha256]);
		expect(c.orphanFiles).toEqual([stray.sha256]);
		// Put things right again for any later test in this file.
		await store.delete(stray.sha256);
	});
});
