// Background duties of the web process: run digests, mail delivery and (when enabled) in-process check workers.
// Started once from hooks.server.ts; never during `vite build`.
import { building } from '$app/environment';
import { closeDb, getDb } from './db';
import { flushOutbox } from './mail';
import { sendRunDigests } from './run-digest';
import { config } from './config';
import { closeEngineThreads, warmEngineThreads } from './jobs/check';
import { runWorkerLoop } from './jobs/runner';

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
	// In-process check workers (CHECK_WORKERS, default 1; 0 leaves checks to `npm run worker`).
	const controller = new AbortController();
	for (let i = 0; i < config.checkWorkers; i++) void runWorkerLoop({ db: getDb, signal: controller.signal });
	// Engine threads start and warm up now, so the first check after a start is not the slow one.
	if (config.checkWorkers > 0) warmEngineThreads().catch(() => {});
	// adapter-node emits this after it stops accepting requests (SIGTERM/SIGINT): stop the loops and
	// close the pool so the process can exit by itself.
	process.once('sveltekit:shutdown' as 'exit', () => {
		controller.abort();
		clearInterval(timer);
		void closeDb();
		void closeEngineThreads();
	});
}
