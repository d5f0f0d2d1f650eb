// End-to-end tests: tests/*.e2e.ts in Debian's chromium against the built app (node build).
// scripts/test.sh starts the throwaway MariaDB, mail catcher and fake S3 and exports their env.
import { defineConfig } from '@playwright/test';

const port = Number(process.env.E2E_PORT ?? 4174);
const baseURL = `http://127.0.0.1:${port}`;

// Passed through to the app so it talks to the same fakes as the integration tests.
const PASS_THROUGH = [
	'DATABASE_URL',
	'SMTP_HOST',
	'SMTP_PORT',
	'MAIL_FROM',
	'MAILBOX_DIR',
	'SHELLGATE_DATA_DIR',
	'STORAGE',
	'S3_ENDPOINT',
	'S3_BUCKET',
	'S3_REGION',
	'S3_ACCESS_KEY',
	'S3_SECRET_KEY',
	'UPLOAD_LIMIT_MB',
	'MAX_FACES',
	'CHECK_WORKERS',
	'CHECK_TIME_LIMIT_S',
	'CHECK_MEMORY_LIMIT_MB',
	'CHECK_ATTEMPTS'
];
const passed: Record<string, string> = {};
for (const name of PASS_THROUGH) {
	const value = process.env[name];
	if (value !== undefined) passed[name] = value;
}

export default defineConfig({
	testDir: 'tests',
	testMatch: '**/*.e2e.ts',
	// The viewer bench is a measurement, not a test: only `npm run bench:viewer` (VIEWER_BENCH=1) runs it.
	testIgnore: process.env.VIEWER_BENCH ? [] : ['**/viewer-bench.e2e.ts'],
	workers: 1,
	retries: 0,
	forbidOnly: !!process.env.CI,
	reporter: 'list',
	// Generous: CI machines and the shared development machine are often heavily loaded.
	timeout: 60_000,
	expect: { timeout: 15_000 },
	outputDir: 'test-results',
	use: {
		baseURL,
		screenshot: 'only-on-failure',
		launchOptions: {
			executablePath: '/usr/bin/chromium',
			// Playwright already adds --headless, --no-sandbox and --enable-unsafe-swiftshader.
			// The machine has no network: keep chromium from phoning home.
			args: ['--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run']
		}
	},
	webServer: {
		command: `node ${process.env.BUILD_DIR ?? 'build'}`,
		url: baseURL,
		reuseExistingServer: false,
		timeout: 60_000,
		stdout: 'pipe',
		stderr: 'pipe',
		env: {
			...passed,
			PORT: String(port),
			HOST: '127.0.0.1',
			ORIGIN: baseURL,
			SHELLGATE_DEV_MAILBOX: '1',
			// A run's digest goes out once the run has been quiet this long (default a minute).
			RUN_DIGEST_SETTLE_MS: process.env.RUN_DIGEST_SETTLE_MS ?? '2000',
			// The app enforces its own upload limit (UPLOAD_LIMIT_MB) while streaming.
			BODY_SIZE_LIMIT: 'Infinity'
		}
	}
});
