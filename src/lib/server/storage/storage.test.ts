import { mkdtempSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { createHash } from 'node:crypto';
import { beforeAll, describe, expect, it } from 'vitest';
import { LocalStore } from './local';
import { S3Store } from './s3';
import { spool, UploadTooLargeError, type FileStore } from '.';

beforeAll(() => {
	process.env.SHELLGATE_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'sg-store-'));
});

const bytes = new TextEncoder().encode('solid keel\nendsolid keel\n'.repeat(1000));
const sha = createHash('sha256').update(bytes).digest('hex');

const backends: [string, () => FileStore][] = [['local disk', () => new LocalStore(path.join(process.env.SHELLGATE_DATA_DIR!, 'files'))]];
// npm test runs a fake S3 (s3rver) on loopback and exports S3_*; the S3 backend is tested against it.
if (process.env.S3_ENDPOINT) backends.push(['S3 (fake S3 on loopback)', () => new S3Store()]);

describe.each(backends)('%s store', (_name, make) => {
	it('stores spooled bytes under their sha256, reads them back, lists and deletes them', async () => {
		const store = make();
		const s = await spool(Readable.from([Buffer.from(bytes.subarray(0, 5000)), Buffer.from(bytes.subarray(5000))]), 1 << 20);
		expect(s.sha256).toBe(sha);
		expect(s.size).toBe(bytes.length);
		await store.putFile(s.tmpPath, s.sha256, s.size);
		expect(await store.exists(sha)).toBe(true);
		expect(Buffer.from(await store.read(sha)).equals(Buffer.from(bytes))).toBe(true);
		const listed: string[] = [];
		for await (const x of store.list()) listed.push(x);
		expect(listed).toContain(sha);
		await store.delete(sha);
		expect(await store.exists(sha)).toBe(false);
	});
});

describe('spooling', () => {
	it('stops at the size limit and leaves no temporary file behind', async () => {
		const tmp = path.join(process.env.SHELLGATE_DATA_DIR!, 'tmp');
		// An endless source: the limit must stop it, not the end of the data.
		const endless = new Readable({ read() { this.push(Buffer.alloc(64 * 1024, 1)); } });
		await expect(spool(endless, 1 << 20)).rejects.toBeInstanceOf(UploadTooLargeError);
		expect(readdirSync(tmp)).toEqual([]);
	});
});
