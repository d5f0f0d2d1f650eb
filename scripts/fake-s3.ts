// S3 stand-in for integration tests: s3rver on 127.0.0.1:S3_PORT, objects under S3_DIR, bucket
// S3_BUCKET created at start. Clients must use forcePathStyle, region us-east-1, credentials
// S3RVER/S3RVER and requestChecksumCalculation/responseChecksumValidation 'WHEN_REQUIRED'
// (otherwise s3rver stores streamed bodies corrupted).
import { mkdirSync } from 'node:fs';
import { resolve } from 'node:path';
import S3rver from 's3rver';

const port = Number(process.env.S3_PORT ?? 4569);
const directory = resolve(process.env.S3_DIR ?? '.data/s3');
const bucket = process.env.S3_BUCKET ?? 'shellgate-test';
if (bucket.length < 3) throw new Error(`S3_BUCKET "${bucket}" is too short: bucket names need at least 3 characters`);

mkdirSync(directory, { recursive: true });
const server = new S3rver({
	address: '127.0.0.1',
	port,
	directory,
	silent: true,
	configureBuckets: [{ name: bucket, configs: [] }]
});

try {
	await server.run();
} catch (e) {
	console.error(`[fake-s3] could not listen on 127.0.0.1:${port}:`, (e as Error).message);
	process.exit(1);
}
console.log(`[fake-s3] listening on 127.0.0.1:${port}, bucket ${bucket}, files in ${directory}`);

function shutdown() {
	server.close().then(() => process.exit(0), () => process.exit(0));
	setTimeout(() => process.exit(0), 2000).unref();
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
