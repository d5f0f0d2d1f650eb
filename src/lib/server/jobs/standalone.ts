// `npm run worker`: check workers in a process of their own, for other machines that share the
// same MariaDB and file store. CHECK_WORKERS loops (default 1); Ctrl-C finishes cleanly.
import { closeDb, getDb } from '../db';
import { config } from '../config';
import { closeEngineThreads, warmEngineThreads } from './check';
import { newWorkerId, runWorkerLoop } from './runner';
import { JobWake } from './wake';

const controller = new AbortController();
// A repair's result is ingested here, and its check queued here: the loops hear of it at once.
const wake = new JobWake().listen();
const n = Math.max(1, config.checkWorkers);
process.on('SIGINT', () => controller.abort());
process.on('SIGTERM', () => controller.abort());
console.log(`[shellgate] ${n} check worker(s) on ${config.databaseUrl.replace(/\/\/[^@]*@/, '//…@')}; Ctrl-C stops them`);
warmEngineThreads().catch(() => {});
await Promise.all(
	Array.from({ length: n }, (_, i) =>
		runWorkerLoop({
			db: getDb,
			workerId: newWorkerId(`standalone${i}`),
			signal: controller.signal,
			wake,
			onResult: (id, outcome) => console.log(`[shellgate] job ${id}: ${outcome}`)
		})
	)
);
wake.close();
await closeEngineThreads();
await closeDb();
