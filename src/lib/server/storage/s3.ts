import {
	DeleteObjectCommand,
	GetObjectCommand,
	HeadObjectCommand,
	ListObjectsV2Command,
	PutObjectCommand,
	S3Client
} from '@aws-sdk/client-s3';
import { createReadStream } from 'node:fs';
import fs from 'node:fs/promises';
import { Readable } from 'node:stream';
import type { FileStore } from '.';

const PREFIX = 'meshes/';

function env(name: string, fallback?: string): string {
	const v = process.env[name] ?? fallback;
	if (!v) throw new Error(`${name} must be set when STORAGE=s3`);
	return v;
}

/** S3-compatible object storage; objects are named meshes/<sha256>. */
export class S3Store implements FileStore {
	readonly backend = 's3' as const;
	private client: S3Client;
	private bucket: string;

	constructor() {
		this.bucket = env('S3_BUCKET');
		this.client = new S3Client({
			endpoint: process.env.S3_ENDPOINT || undefined,
			region: env('S3_REGION', 'us-east-1'),
			forcePathStyle: true,
			credentials: { accessKeyId: env('S3_ACCESS_KEY'), secretAccessKey: env('S3_SECRET_KEY') },
			// Some S3-compatible stores mangle streamed bodies when the SDK adds its own checksums.
			requestChecksumCalculation: 'WHEN_REQUIRED',
			responseChecksumValidation: 'WHEN_REQUIRED'
		});
	}

	async putFile(tmpPath: string, sha256: string, size: number): Promise<void> {
		try {
			if (!(await this.exists(sha256))) {
				await this.client.send(
					new PutObjectCommand({ Bucket: this.bucket, Key: PREFIX + sha256, Body: createReadStream(tmpPath), ContentLength: size, ContentType: 'application/octet-stream' })
				);
			}
		} finally {
			await fs.rm(tmpPath, { force: true });
		}
	}

	async exists(sha256: string): Promise<boolean> {
		try {
			await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: PREFIX + sha256 }));
			return true;
		} catch (e) {
			const status = (e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode;
			if (status === 404 || (e as Error).name === 'NotFound' || (e as Error).name === 'NoSuchKey') return false;
			throw e;
		}
	}

	async read(sha256: string): Promise<Uint8Array> {
		const res = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: PREFIX + sha256 }));
		return await res.Body!.transformToByteArray();
	}

	async stream(sha256: string): Promise<Readable> {
		const res = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: PREFIX + sha256 }));
		return res.Body as Readable;
	}

	async delete(sha256: string): Promise<void> {
		await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: PREFIX + sha256 }));
	}

	async *list(): AsyncIterable<string> {
		let token: string | undefined;
		do {
			const res = await this.client.send(new ListObjectsV2Command({ Bucket: this.bucket, Prefix: PREFIX, ContinuationToken: token }));
			for (const o of res.Contents ?? []) if (o.Key) yield o.Key.slice(PREFIX.length);
			token = res.IsTruncated ? res.NextContinuationToken : undefined;
		} while (token);
	}
}
