// Background duties of the web process: mail delivery and (when enabled) in-process check workers.
// Started once from hooks.server.ts; never during `vite build`.
import { building } from '$app/environment';
import { getDb } from './db';
import { flushOutbox } from './mail';

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
			await flushOutbox(getDb());
		} catch {
			// Database or SMTP down: mail stays pending and goes out on a later tick.
		} finally {
			flushing = false;
		}
	}, 1000);
	timer.unref();
}
