// Starts a worker thread that runs one exported function of a module, named by the module's own
// import.meta.url. That URL names the bundled server chunk after `vite build` and the TypeScript
// source under tsx and vitest; in the latter case tsx's CommonJS hook is loaded first.
import { createRequire } from 'node:module';
import { Worker, type ResourceLimits } from 'node:worker_threads';

const SOURCE = `
const { workerData } = require('node:worker_threads');
const { moduleUrl, entry, tsxHook } = workerData.__module;
if (tsxHook) {
	require(tsxHook);
	require(require('node:url').fileURLToPath(moduleUrl))[entry]();
} else {
	import(moduleUrl).then((m) => m[entry]());
}
`;

export function spawnModuleWorker(moduleUrl: string, entry: string, data: Record<string, unknown>, opts: { resourceLimits?: ResourceLimits; transferList?: Transferable[] } = {}): Worker {
	const tsxHook = moduleUrl.endsWith('.ts') ? createRequire(import.meta.url).resolve('tsx/cjs') : null;
	return new Worker(SOURCE, {
		eval: true,
		workerData: { ...data, __module: { moduleUrl, entry, tsxHook } },
		resourceLimits: opts.resourceLimits,
		transferList: opts.transferList as never
	});
}
