// Settings from the environment, read in one place so the app, the standalone worker and the scripts agree.
// Plain process.env (not $env) because the worker and scripts run outside SvelteKit.
import { availableParallelism } from 'node:os';
import path from 'node:path';

function num(name: string, fallback: number): number {
	const raw = process.env[name];
	if (raw === undefined || raw === '') return fallback;
	const n = Number(raw);
	if (!Number.isFinite(n) || n < 0) throw new Error(`${name} must be a non-negative number, got "${raw}"`);
	return n;
}

export const config = {
	get databaseUrl() {
		const url = process.env.DATABASE_URL;
		if (!url) throw new Error('DATABASE_URL is not set (npm start sets it for the private MariaDB)');
		return url;
	},
	get dataDir() {
		return path.resolve(process.env.SHELLGATE_DATA_DIR || '.data');
	},
	get smtpHost() {
		return process.env.SMTP_HOST || '127.0.0.1';
	},
	get smtpPort() {
		return num('SMTP_PORT', 2525);
	},
	get mailFrom() {
		return process.env.MAIL_FROM || 'Shellgate <shellgate@example.test>';
	},
	get mailboxDir() {
		return path.resolve(process.env.MAILBOX_DIR || path.join(this.dataDir, 'mailbox'));
	},
	get devMailbox() {
		return process.env.SHELLGATE_DEV_MAILBOX === '1';
	},
	get origin() {
		return process.env.ORIGIN || `http://127.0.0.1:${process.env.PORT || 3000}`;
	},
	get storage(): 'local' | 's3' {
		return process.env.STORAGE === 's3' ? 's3' : 'local';
	},
	get uploadLimitBytes() {
		return num('UPLOAD_LIMIT_MB', 512) * 1024 * 1024;
	},
	get maxFaces() {
		return num('MAX_FACES', 20_000_000);
	},
	get checkWorkers() {
		return num('CHECK_WORKERS', 1);
	},
	/**
	 * Worker threads one check starts for its self-intersection stage, beside the engine thread
	 * (which joins the traversal once its own stages are done). Default: one per core beside the
	 * engine thread's own, at least one (the engine's defaultSelfIntersectThreads, inspect-node.ts).
	 */
	get checkThreads() {
		return Math.max(1, num('CHECK_THREADS', availableParallelism() - 1));
	},
	/**
	 * Nice value added to the engine threads (Linux), so the web process and MariaDB keep the CPU
	 * when they need it and checks run on what is left. 0 leaves the engine at normal priority.
	 */
	get engineNiceness() {
		return Math.min(19, num('ENGINE_NICENESS', 15));
	},
	/** Seconds an idle engine thread is kept for the next task before it ends. */
	get engineIdleMs() {
		return num('ENGINE_IDLE_S', 120) * 1000;
	},
	get checkTimeLimitMs() {
		return num('CHECK_TIME_LIMIT_S', 300) * 1000;
	},
	get checkMemoryLimitMb() {
		return num('CHECK_MEMORY_LIMIT_MB', 4096);
	},
	get checkAttempts() {
		return num('CHECK_ATTEMPTS', 3);
	},
	/**
	 * How long a generator run must stay quiet (no upload, no check result) after its last check
	 * before its digest mail goes out, so a pipeline still uploading is not digested half-way.
	 */
	get runDigestSettleMs() {
		return num('RUN_DIGEST_SETTLE_MS', 60_000);
	}
};
