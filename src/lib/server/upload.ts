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

/**
 * How long a refused body is still read (and thrown away) before the connection is cut. Time, not
 * bytes: a client that gets the refusal stops sending within a round trip, but on a loaded machine
 * that can take a while, and at local speed any byte bound (it was 64 MB) is passed in well under a
 * second.
 */
export const DRAIN_MS = 30_000;

/**
 * The request body, except that stopping to read it does not reset the connection. Cancelling the
 * request's body stream makes the Node adapter destroy the socket, and a socket closed while the
 * client is still sending (a chunked body with no Content-Length cannot be refused up front, so the
 * client always is) answers with a TCP reset, which throws away the 413 the client has not read yet:
 * the client sees ECONNRESET after `100 Continue`. So a cancel only stops handing chunks on; the
 * rest is read and discarded in the background until the client stops sending (it does once it has
 * the answer) or `drainMs` has passed, and only a client still sending then is cut off.
 */
export function refusableBody(body: ReadableStream<Uint8Array>, drainMs = DRAIN_MS): ReadableStream<Uint8Array> {
	const reader = body.getReader();
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			const { done, value } = await reader.read();
			if (done) controller.close();
			else controller.enqueue(value);
		},
		cancel() {
			const timer = setTimeout(() => void reader.cancel().catch(() => {}), drainMs);
			timer.unref?.();
			void (async () => {
				try {
					for (;;) if ((await reader.read()).done) return;
				} catch {
					// The client went away, or the time was up; nothing more to drain.
				} finally {
					clearTimeout(timer);
				}
			})();
		}
	});
}

/**
 * Why reading a body stopped, as the domain error the client gets: over our upload limit, over the
 * Node adapter's own request cap (BODY_SIZE_LIMIT, 512 KB unless the environment lifts it; its error
 * carries status 413), or cut off.
 */
export function bodyRefusal(e: unknown): DomainError {
	if (e instanceof DomainError) return e;
	if (e instanceof UploadTooLargeError) return new DomainError('invalid', e.message, 'too-large');
	if ((e as { status?: unknown })?.status === 413) {
		return new DomainError('invalid', 'The request is larger than the server accepts: its request-size cap (BODY_SIZE_LIMIT) is below the upload limit. Ask the administrator to lift it.', 'too-large');
	}
	return new DomainError('invalid', `The upload was interrupted: ${(e as Error)?.message ?? 'the body ended early'}`);
}

export async function receiveMultipart(request: Request, limitBytes: number, drainMs = DRAIN_MS): Promise<Received> {
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
	const source = Readable.fromWeb(refusableBody(request.body, drainMs) as import('node:stream/web').ReadableStream);
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
						fail(bodyRefusal(e));
					}
				)
			);
		});
		bb.on('filesLimit', () => fail(new DomainError('invalid', `At most ${MAX_FILES_PER_REQUEST} files per request.`, 'too-large')));
		bb.on('error', (e: Error) => fail(new DomainError('invalid', `The multipart body is malformed: ${e.message}`)));
		bb.on('close', () => resolve());
		source.on('error', (e) => fail(bodyRefusal(e)));
		source.pipe(bb);
	});
	await Promise.allSettled(pending);
	if (failure) {
		await Promise.all(files.map((f) => discard(f.spooled)));
		throw failure;
	}
	return { fields, files };
}
