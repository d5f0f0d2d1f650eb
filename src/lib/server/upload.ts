// Streams a multipart request into spooled temporary files (hashing on the way) with busboy, so a
// large upload is never held in memory. Refuses as soon as a limit is passed.
import Busboy from 'busboy';
import { Readable } from 'node:stream';
import { DomainError } from '../domain-error';
import { discard, spool, UploadTooLargeError, type Spooled } from './storage';

export interface ReceivedFile {
	field: string;
	fileName: string;
	spooled: Spooled;
}

export interface Received {
	fields: Record<string, string>;
	files: ReceivedFile[];
}

export const MAX_FILES_PER_REQUEST = 50;

/** How much of a refused body is still read (and thrown away), and for how long, so the refusal reaches the client. */
const DRAIN_BYTES = 64 * 1024 * 1024;
const DRAIN_MS = 10_000;

/**
 * The request body, except that stopping to read it does not reset the connection. The Node adapter
 * destroys the socket when a body stream is cancelled, and a client still sending (a chunked body
 * with no Content-Length, which cannot be refused up front) would then see a reset instead of the
 * 413. Here a cancel keeps reading and discarding the rest in the background, up to a bound, so the
 * response goes out first; only a body longer than that is cut off.
 */
export function refusableBody(body: ReadableStream<Uint8Array>): ReadableStream<Uint8Array> {
	const reader = body.getReader();
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			const { done, value } = await reader.read();
			if (done) controller.close();
			else controller.enqueue(value);
		},
		cancel() {
			void (async () => {
				let drained = 0;
				const until = Date.now() + DRAIN_MS;
				const timer = setTimeout(() => void reader.cancel().catch(() => {}), DRAIN_MS);
				timer.unref?.();
				try {
					while (drained < DRAIN_BYTES && Date.now() < until) {
						const { done, value } = await reader.read();
						if (done) return;
						drained += value.byteLength;
					}
					await reader.cancel();
				} catch {
					// The client went away; nothing to drain.
				} finally {
					clearTimeout(timer);
				}
			})();
		}
	});
}

export async function receiveMultipart(request: Request, limitBytes: number): Promise<Received> {
	const type = request.headers.get('content-type') ?? '';
	if (!type.toLowerCase().startsWith('multipart/form-data')) throw new DomainError('invalid', 'Send the file as multipart/form-data in a field named "file".', 'unsupported-type');
	const declared = Number(request.headers.get('content-length') ?? NaN);
	// A declared length far over the limit is refused before a byte is read.
	if (Number.isFinite(declared) && declared > limitBytes + 1024 * 1024) throw new DomainError('invalid', new UploadTooLargeError(limitBytes).message, 'too-large');
	if (!request.body) throw new DomainError('invalid', 'The request has no body.');

	const files: ReceivedFile[] = [];
	const fields: Record<string, string> = {};
	const pending: Promise<void>[] = [];
	let failure: Error | null = null;
	let bb: Busboy.Busboy;
	try {
		bb = Busboy({ headers: { 'content-type': type }, limits: { files: MAX_FILES_PER_REQUEST, fields: 20, fieldSize: 8 * 1024, parts: MAX_FILES_PER_REQUEST + 20 } });
	} catch {
		throw new DomainError('invalid', 'The multipart body is malformed (no boundary).');
	}
	const source = Readable.fromWeb(refusableBody(request.body) as import('node:stream/web').ReadableStream);
	await new Promise<void>((resolve) => {
		// File parts still being spooled: on a failure they are destroyed too, or their spool would wait
		// forever for the rest of a body that is never coming (and leave its temporary file behind).
		const open = new Set<Readable>();
		const fail = (e: Error) => {
			failure ??= e;
			source.unpipe(bb);
			source.destroy();
			for (const s of open) s.destroy(e);
			resolve();
		};
		bb.on('field', (name, value, info) => {
			if (info.valueTruncated) return fail(new DomainError('invalid', `The field "${name.slice(0, 40)}" is too long.`));
			fields[name] = value;
		});
		bb.on('file', (field, stream, info) => {
			open.add(stream);
			stream.once('close', () => open.delete(stream));
			// The spool reports the failure; this keeps a late error event from going unhandled.
			stream.on('error', () => {});
			pending.push(
				spool(stream, limitBytes).then(
					(spooled) => {
						files.push({ field, fileName: info.filename ?? 'mesh', spooled });
					},
					(e: Error) => {
						stream.resume();
						fail(e instanceof UploadTooLargeError ? new DomainError('invalid', e.message, 'too-large') : new DomainError('invalid', `The upload was interrupted: ${e.message}`));
					}
				)
			);
		});
		bb.on('filesLimit', () => fail(new DomainError('invalid', `At most ${MAX_FILES_PER_REQUEST} files per request.`, 'too-large')));
		bb.on('error', (e: Error) => fail(new DomainError('invalid', `The multipart body is malformed: ${e.message}`)));
		bb.on('close', () => resolve());
		source.on('error', (e) => fail(new DomainError('invalid', `The upload was interrupted: ${e.message}`)));
		source.pipe(bb);
	});
	await Promise.allSettled(pending);
	if (failure) {
		await Promise.all(files.map((f) => discard(f.spooled)));
		throw failure;
	}
	return { fields, files };
}
