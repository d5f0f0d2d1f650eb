/**
 * Starts a worker thread that loads one module by its own import.meta.url; the module runs its
 * worker side at load time when `isWorkerFor(tag)` says the thread was started for it.
 *
 * Why not call an export by name: after `vite build` the bundler renames a chunk's exports, so the
 * worker could not find `runX` in the chunk. A module-level `if (isWorkerFor('x')) runX()` survives
 * bundling. The URL names the TypeScript source under tsx and vitest; then tsx's CommonJS hook is
 * loaded first so Node can run it.
 */
import { readlinkSync } from 'node:fs';
import { createRequire } from 'node:module';
import { getPriority, setPriority } from 'node:os';
import { isMainThread, Worker, workerData, type ResourceLimits } from 'node:worker_threads';

const SOURCE = `
const { workerData } = require('node:worker_threads');
const { moduleUrl, tsxHook, commonJs } = workerData.__module;
if (tsxHook) {
	require(tsxHook);
	require(require('node:url').fileURLToPath(moduleUrl));
} else if (commonJs) {
	require(require('node:url').fileURLToPath(moduleUrl));
} else {
	import(moduleUrl);
}
`;

/**
 * True when this module runs as CommonJS (the command line's bundle): the module a worker loads is
 * this bundle, and require() spares the thread the ES module loader, which scans a CommonJS file's
 * whole source for its export names first (400-600 ms of CPU per worker for the bundle).
 */
const COMMON_JS = typeof module === 'object' && module !== null && typeof require === 'function';

export function spawnModuleWorker(
	moduleUrl: string,
	tag: string,
	data: Record<string, unknown>,
	opts: { resourceLimits?: ResourceLimits; transferList?: Transferable[] } = {}
): Worker {
	const tsxHook = moduleUrl.endsWith('.ts') ? createRequire(import.meta.url).resolve('tsx/cjs') : null;
	return new Worker(SOURCE, {
		eval: true,
		workerData: { ...data, __module: { moduleUrl, tag, tsxHook, commonJs: COMMON_JS && moduleUrl.startsWith('file:') } },
		resourceLimits: opts.resourceLimits,
		transferList: opts.transferList as never
	});
}

/** True inside a worker thread that spawnModuleWorker started with this tag. */
export function isWorkerFor(tag: string): boolean {
	return !isMainThread && (workerData as { __module?: { tag?: string } } | null)?.__module?.tag === tag;
}

/**
 * Raises the calling thread's nice value by `niceness` (Linux: the nice value is per thread, and
 * threads this one starts inherit it, so the engine's own worker threads follow). The web process
 * then keeps the CPU when both want it, and checks use what is left. Lowering a priority needs no
 * privilege; where it is not possible (another OS, a restricted sandbox) nothing changes. Returns
 * the nice value now in force, or null when it could not be set.
 */
export function lowerThisThreadPriority(niceness: number): number | null {
	if (!(niceness > 0) || process.platform !== 'linux') return null;
	try {
		const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
		if (!Number.isInteger(tid) || tid <= 0) return null;
		setPriority(tid, Math.min(19, getPriority(tid) + Math.floor(niceness)));
		return getPriority(tid);
	} catch {
		return null;
	}
}
