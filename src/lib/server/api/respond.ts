// JSON answers for /api/v1: every error is {"message": "..."} with a 4xx status (503 while the
// database is unreachable), never a bare 500 for something the caller can fix.
import { json } from '@sveltejs/kit';
import { asDomainError, httpStatus, publicMessage } from '../errors';
import { notFound } from '../../domain-error';
import { withoutPaths } from '../reasons';

export function apiError(status: number, message: string, extra: Record<string, unknown> = {}): Response {
	return json({ message: withoutPaths(message), ...extra }, { status });
}

/** The one translation of an error to an /api/v1 answer. */
export function apiErrorFor(e: unknown): Response {
	const d = asDomainError(e);
	if (d) return apiError(httpStatus(d), publicMessage(d));
	// SvelteKit's own 4xx (error(…) from a guard such as requireRole).
	const status = (e as { status?: number }).status;
	if (typeof status === 'number' && status >= 400 && status < 500) return apiError(status, (e as { body?: { message?: string } }).body?.message ?? 'Request refused.');
	console.error('[shellgate api]', loggable(e));
	return apiError(500, 'Something went wrong on the server. It has been logged.');
}

export async function handleApi(fn: () => Promise<Response>): Promise<Response> {
	try {
		return await fn();
	} catch (e) {
		return apiErrorFor(e);
	}
}

export function parseId(raw: string, what = 'revision'): number {
	if (!/^\d{1,10}$/.test(raw)) throw notFound(`No ${what} "${raw.slice(0, 40)}".`);
	return Number(raw);
}

/**
 * An error for the log without its query parameters: Drizzle puts them in the message
 * ("Failed query: …\nparams: …"), and they can be session ids or token hashes.
 */
export function loggable(e: unknown): string {
	return String((e as Error)?.stack ?? e).replace(/^params: .*$/gm, 'params: (not logged)');
}
