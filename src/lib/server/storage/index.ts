// Content-addressed file storage behind one small interface, with a local-disk and an S3 backend.
// Uploads are first spooled to a temporary file while being hashed (never held in memory whole),
// then handed to the backend under their sha256.
import { createHash, randomUUID } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import fs from 'node:fs/promises';
import path from 'node:path';
import { Readable, Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { config } from '../config';
import { LocalStore } from './local';
import { S3Store } from './s3';

export interface FileStore {
	readonly backend: 'local' | 's3';
	/** Moves (local) or uploads (S3) a spooled file to its content address. Idempotent. */
	putFile(tmpPath: string, sha256: string, size: number): Promise<void>;
	exists(sha256: string): Promise<boolean>;
	read(sha256: string): Promise<Uint8Array>;
	stream(sha256: string): Promise<Readable>;
	delete(sha256: string): Promise<void>;
	/** Every stored sha256, for the consistency check. */
	list(): AsyncIterable<string>;
}

let store: FileStore | undefined;

export function getStore(): FileStore {
	store ??= config.storage === 's3' ? new S3Store() : new LocalStore(path.join(config.dataDir, 'files'));
	return store;
}

export class UploadTooLargeError extends Error {
	constructor(limit: number) {
		super(`The file is larger than the upload limit of ${Math.round(limit / 1024 / 1024)} MB.`);
		this.name = 'UploadTooLargeError';
	}
}

export interface Spooled {
	tmpPath: string;
	sha256: string;
	size: number;
	/** First bytes of the file, for sniffing the format without reading it again. */
	head: Uint8Array;
}

/**
 * Writes a stream to a temporary file, hashing it on the way; stops as soon as `limit` is passed.
 * The temporary file is removed on any failure.
 */
export async function spool(source: Readable | ReadableStream<Uint8Array>, limit: number): Promise<Spooled> {
	const dir = path.join(config.dataDir, 'tmp');
	await fs.mkdir(dir, { recursive: true });
	const tmpPath = path.join(dir, `upload-${randomUUID()}`);
	const hash = createHash('sha256');
	let size = 0;
	const headChunks: Buffer[] = [];
	let headLen = 0;
	const meter = new Transform({
		transform(chunk: Buffer, _enc, done) {
			size += chunk.length;
			if (size > limit) return done(new UploadTooLargeError(limit));
			hash.update(chunk);
			if (headLen < 512) {
				headChunks.push(chunk.subarray(0, 512 - headLen));
				headLen += Math.min(chunk.length, 512 - headLen);
			}
			done(null, chunk);
		}
	});
	const input = source instanceof Readable ? source : Readable.fromWeb(source as import('node:stream/web').ReadableStream);
	try {
		await pipeline(input, meter, createWriteStream(tmpPath));
	} catch (e) {
		await fs.rm(tmpPath, { force: true });
		throw e;
	}
	return { tmpPath, sha256: hash.digest('hex'), size, head: new Uint8Array(Buffer.concat(headChunks)) };
}

export async function discard(s: Spooled | null | undefined): Promise<void> {
	if (s) await fs.rm(s.tmpPath, { force: true });
}

export async function sha256OfFile(file: string): Promise<string> {
	const hash = createHash('sha256');
	await pipeline(createReadStream(file), hash);
	return hash.digest('hex');
}
