// The engine, run off the main thread: bytes in, report (or a reader's refusal) out, with progress.
// Imports only src/lib/mesh, so a worker thread loads no server or database code.
import { isMainThread, parentPort, workerData } from 'node:worker_threads';
import { isWorkerFor } from '../../mesh/module-worker-node';
import { inspectBytes } from '../../mesh/inspect';
import { inspectFileNode } from '../../mesh/inspect-node';
import { MeshReadError } from '../../mesh/types';
import type { InspectOptions } from '../../mesh/report';

/** This module's own URL: the TypeScript source under tsx/vitest, its bundled chunk after `vite build`. */
export const CHECK_THREAD_URL = import.meta.url;

export interface CheckThreadInput {
	bytes: Uint8Array;
	fileName: string;
	options: InspectOptions;
	/** Worker threads for the self-intersection stage, inside this thread. */
	threads: number;
}

export type CheckThreadMessage =
	| { type: 'progress'; stage: string; percent: number }
	| { type: 'done'; report: unknown }
	| { type: 'refused'; message: string }
	| { type: 'error'; message: string };

export async function runCheckThread(): Promise<void> {
	if (isMainThread || !parentPort) throw new Error('runCheckThread must run in a worker thread');
	const port = parentPort;
	const input = workerData as CheckThreadInput;
	const post = (m: CheckThreadMessage) => port.postMessage(m);
	try {
		// Small files: starting more threads would cost more than the whole check.
		const small = input.bytes.byteLength < 4 * 1024 * 1024;
		const report = small ? inspectBytes(input.bytes, input.fileName, input.options) : await inspectFileNode(input.bytes, input.fileName, {
			...input.options,
			threads: input.threads,
			onProgress: (stage, percent) => post({ type: 'progress', stage, percent: Math.min(94, 5 + percent * 0.9) })
		});
		post({ type: 'progress', stage: 'storing', percent: 95 });
		post({ type: 'done', report });
	} catch (e) {
		if (e instanceof MeshReadError) post({ type: 'refused', message: e.message });
		else post({ type: 'error', message: e instanceof Error ? e.message : String(e) });
	}
}

if (isWorkerFor('shellgate-check')) void runCheckThread();
