// JSON answers for /api/v1: every error is {"message": "..."} with a 4xx status, never a bare 500.
import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { withoutPaths } from '../reasons';
import { HttpError } from '../revisions';

export function apiError(status: number, message: string, extra: Record<string, unknown> = {}): Response {
	return json({ message: withoutPaths(message), ...extra }, { status });
}

export async function handleApi(fn: () => Promise<Response>): Promise<Response> {
	try {
		return await fn();
	} catch (e) {
		if (e instanceof HttpError) return apiError(e.status, e.message);
		if (e instanceof z.ZodError) return apiError(400, e.issues.map((i) => `${i.path.join('.') || 'body'}: ${i.message}`).join('; '));
		const status = (e as { status?: number }).status;
		if (typeof status === 'number' && status >= 400 && status < 500) return apiError(status, (e as { body?: { message?: string } }).body?.message ?? 'Request refused.');
		// Drizzle wraps the driver's error, so the connection code may sit in a cause.
		const codes: string[] = [];
		for (let x: unknown = e, depth = 0; x && depth < 5; x = (x as { cause?: unknown }).cause, depth++) codes.push((x as { code?: string }).code ?? '');
		if (codes.some((code) => ['ECONNREFUSED', 'PROTOCOL_CONNECTION_LOST', 'ETIMEDOUT', 'ECONNRESET', 'ER_CON_COUNT_ERROR'].includes(code))) {
			return apiError(503, 'The database is not reachable right now. Nothing was changed; try again in a moment.');
		}
		console.error('[shellgate api]', loggable(e));
		return apiError(500, 'Something went wrong on the server. It has been logged.');
	}
}

export function parseId(raw: string, what = 'revision'): number {
	if (!/^\d{1,10}$/.test(raw)) throw new HttpError(404, `No ${what} "${raw.slice(0, 40)}".`);
	return Number(raw);
}

/**
 * An error for the log without its query parameters: Drizzle puts them in the message
 * ("Failed query: …\nparams: …"), and they can be session ids or token hashes.
 */
export function loggable(e: unknown): string {
	return String((e as Error)?.stack ?? e).replace(/^params: .*$/gm, 'params: (not logged)');
}
