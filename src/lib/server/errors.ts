// Domain errors (src/lib/domain-error.ts) as HTTP: the one table of kind → status, the one test for
// "the database is down", and the translations for /api/v1 (JSON), form actions (fail()) and page
// loads (error()). Services throw DomainError and never choose a status themselves.
import { error, fail, type ActionFailure } from '@sveltejs/kit';
import { message, type SuperValidated } from 'sveltekit-superforms';
import { z } from 'zod';
import { DomainError, type DomainErrorKind, type InvalidDetail } from '../domain-error';
import { withoutPaths } from './reasons';

const STATUS: Record<DomainErrorKind, number> = { 'not-found': 404, forbidden: 403, conflict: 409, invalid: 400, unavailable: 503 };
const INVALID_STATUS: Record<InvalidDetail, number> = { 'too-large': 413, 'unsupported-type': 415, 'unreadable-file': 422 };

export const DATABASE_DOWN_MESSAGE = 'The database is not reachable right now. Nothing was changed; try again in a moment.';

/** Driver codes that mean the connection to MariaDB is refused, lost or cannot be had. */
const CONNECTION_CODES = new Set([
	'ECONNREFUSED',
	'ECONNRESET',
	'ETIMEDOUT',
	'EPIPE',
	'EHOSTUNREACH',
	'PROTOCOL_CONNECTION_LOST',
	'PROTOCOL_SEQUENCE_TIMEOUT',
	'PROTOCOL_ENQUEUE_AFTER_FATAL_ERROR',
	'PROTOCOL_ENQUEUE_AFTER_QUIT',
	'ER_CON_COUNT_ERROR',
	'ER_SERVER_SHUTDOWN',
	'ER_CONNECTION_KILLED',
	'ER_NET_READ_INTERRUPTED',
	'ER_NET_WRITE_INTERRUPTED'
]);

/** Whether the error (or one it wraps: Drizzle puts the driver's error in `cause`) is a lost or refused database connection. */
export function isDatabaseDown(e: unknown): boolean {
	for (let x = e, depth = 0; x && depth < 5; x = (x as { cause?: unknown }).cause, depth++) {
		if (CONNECTION_CODES.has((x as { code?: string }).code ?? '')) return true;
	}
	return false;
}

/**
 * The domain error an error stands for, or null when it is unexpected (a bug: logged, answered 500).
 * Zod refusals are `invalid`; a lost database is `unavailable`.
 */
export function asDomainError(e: unknown): DomainError | null {
	if (e instanceof DomainError) return e;
	if (e instanceof z.ZodError) return new DomainError('invalid', e.issues.map((i) => `${i.path.join('.') || 'body'}: ${i.message}`).join('; '));
	if (isDatabaseDown(e)) return new DomainError('unavailable', DATABASE_DOWN_MESSAGE);
	return null;
}

export function httpStatus(e: DomainError): number {
	return e.kind === 'invalid' && e.detail ? INVALID_STATUS[e.detail] : STATUS[e.kind];
}

/** The message people read: never a server path. */
export function publicMessage(e: DomainError): string {
	return withoutPaths(e.message);
}

/** For form actions: a domain error becomes `fail(status, { [key]: message })`; anything else is rethrown. */
export function failFor<K extends string = 'actionError'>(e: unknown, key: K = 'actionError' as K): ActionFailure<Record<K, string>> {
	// A form shows one line: the first thing wrong, without the field path.
	if (e instanceof z.ZodError) return fail(400, { [key]: e.issues[0].message } as Record<K, string>);
	const d = asDomainError(e);
	if (!d) throw e;
	return fail(httpStatus(d), { [key]: publicMessage(d) } as Record<K, string>);
}

/** Runs a form action's work; a domain error comes back as `fail()` under `key`. */
export async function actionResult<T, K extends string = 'actionError'>(fn: () => Promise<T>, key: K = 'actionError' as K): Promise<T | ActionFailure<Record<K, string>>> {
	try {
		return await fn();
	} catch (e) {
		return failFor(e, key);
	}
}

/**
 * For superforms actions: a domain error (or a zod refusal from a service) becomes the form's
 * message with the status of its kind, shown beside the form; anything else is rethrown.
 */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export function formFailure<T extends Record<string, unknown>>(form: SuperValidated<T, any, any>, e: unknown) {
	const d = e instanceof z.ZodError ? new DomainError('invalid', e.issues[0].message) : asDomainError(e);
	if (!d) throw e;
	return message(form, publicMessage(d), { status: httpStatus(d) as 400 });
}

/** Runs a superforms action's work; a domain error comes back as the form's message. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export async function formResult<T extends Record<string, unknown>, R>(form: SuperValidated<T, any, any>, fn: () => Promise<R>) {
	try {
		return await fn();
	} catch (e) {
		return formFailure(form, e);
	}
}

/** For page loads: a domain error becomes SvelteKit's error page with its status; anything else is rethrown. */
export function raiseForPage(e: unknown): never {
	const d = asDomainError(e);
	if (!d) throw e;
	error(httpStatus(d), publicMessage(d));
}
