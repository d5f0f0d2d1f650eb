// Background duties of the web process: run digests, mail delivery and (when enabled) in-process check workers.
// Started once from hooks.server.ts; never during `vite build`.
import { building } from '$app/environment';
import { closeDb, getDb } from './db';
import { flushOutbox } from './mail';
import { sendRunDigests } from './run-digest';
import { config } from './config';
import { closeEngineThreads, warmEngineThreads } from './jobs/check';
import { runWorkerLoop } from './jobs/runner';
import { JobWake } from './jobs/wake';

const KEY = Symbol.for('shellgate.background');

export function startBackground(): void {
	if (building || process.env.SHELLGATE_NO_BACKGROUND === '1') return;
	const g = globalThis as unknown as Record<symbol, boolean>;
	if (g[KEY]) return;
	g[KEY] = true;
	let flushing = false;
	const timer = setInterval(async () => {
		if (flushing) return;
		flushing = true;
		try {
			// Digests of finished generator runs first, so they go out on this same tick.
			await sendRunDigests(getDb()).catch((e) => console.error('[shellgate] run digests:', (e as Error)?.message ?? e));
			await flushOutbox(getDb());
		} catch {
			// Database or SMTP down: mail stays pending and goes out on a later tick.
		} finally {
			flushing = false;
		}
	}, 1000);
	timer.unref();
	// In-process check workers (CHECK_WORKERS, default 1; 0 leaves checks to `npm run worker`),
	// woken at once by a job this process queues (an upload, re-check or repair).
	const controller = new AbortController();
	const wake = new JobWake();
	if (config.checkWorkers > 0) wake.listen();
	for (let i = 0; i < config.checkWorkers; i++) void runWorkerLoop({ db: getDb, signal: controller.signal, wake });
	// Engine threads start and warm up now, so the first check after a start is not the slow one.
	if (config.checkWorkers > 0) {
		const t0 = performance.now();
		warmEngineThreads().then(
			() => console.log(`[shellgate] engine threads warm in ${Math.round(performance.now() - t0)} ms`),
			(e) => console.error('[shellgate] warming the engine threads failed:', (e as Error)?.message ?? e)
		);
	}
	// adapter-node emits this after it stops accepting requests (SIGTERM/SIGINT): stop the loops and
	// close the pool so the process can exit by itself.
	process.once('sveltekit:shutdown' as 'exit', () => {
		controller.abort();
		wake.close();
		clearInterval(timer);
		void closeDb();
		void closeEngineThreads();
	});
}
