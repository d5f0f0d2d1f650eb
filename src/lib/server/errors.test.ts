import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { DOMAIN_ERROR_KINDS, DomainError } from '../domain-error';
import { apiErrorFor } from './api/respond';
import { failFor, httpStatus, isDatabaseDown } from './errors';

const LIB = path.resolve(__dirname, '..');

describe('domain errors as HTTP', () => {
	it('maps each kind to one status, and the invalid details to theirs', () => {
		expect(Object.fromEntries(DOMAIN_ERROR_KINDS.map((k) => [k, httpStatus(new DomainError(k, 'x'))]))).toEqual({ 'not-found': 404, forbidden: 403, conflict: 409, invalid: 400, unavailable: 503 });
		expect(httpStatus(new DomainError('invalid', 'x', 'too-large'))).toBe(413);
		expect(httpStatus(new DomainError('invalid', 'x', 'unsupported-type'))).toBe(415);
		expect(httpStatus(new DomainError('invalid', 'x', 'unreadable-file'))).toBe(422);
	});

	it('answers /api/v1 with JSON {message} and the status, without server paths', async () => {
		const res = apiErrorFor(new DomainError('conflict', 'Cannot read /srv/shellgate/data/files/ab/cd: it is held.'));
		expect(res.status).toBe(409);
		expect(res.headers.get('content-type')).toMatch(/json/);
		const body = (await res.json()) as { message: string };
		expect(body.message).toMatch(/held/);
		expect(body.message).not.toContain('/srv/');
	});

	it('turns a form action’s domain error into fail() under the form’s key, and rethrows anything else', () => {
		const f = failFor(new DomainError('forbidden', 'Not yours.'), 'assignError');
		expect(f.status).toBe(403);
		expect(f.data).toEqual({ assignError: 'Not yours.' });
		expect(failFor(z.object({ a: z.string({ error: 'Give a.' }) }).safeParse({}).error).data).toEqual({ actionError: 'Give a.' });
		const bug = new TypeError('bug');
		expect(() => failFor(bug)).toThrow(bug);
	});

	it('detects a lost database in one place, through Drizzle’s cause chain, for ER_* connection errors too', () => {
		const wrapped = (code: string) => Object.assign(new Error('Failed query'), { cause: Object.assign(new Error(code), { code }) });
		for (const code of ['ECONNREFUSED', 'PROTOCOL_CONNECTION_LOST', 'ER_CON_COUNT_ERROR', 'ER_SERVER_SHUTDOWN', 'ER_CONNECTION_KILLED']) expect(isDatabaseDown(wrapped(code)), code).toBe(true);
		for (const code of ['ER_DUP_ENTRY', 'ER_LOCK_DEADLOCK', 'ENOENT']) expect(isDatabaseDown(wrapped(code)), code).toBe(false);
		expect(apiErrorFor(wrapped('ER_SERVER_SHUTDOWN')).status).toBe(503);
	});
});

function files(dir: string): string[] {
	return readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(path.join(dir, e.name)) : /\.ts$/.test(e.name) ? [path.join(dir, e.name)] : []));
}

describe('pure modules stay pure', () => {
	it('domain-error.ts, revision-states.ts and the engine import no SvelteKit and no database', () => {
		const offenders: string[] = [];
		for (const f of [path.join(LIB, 'domain-error.ts'), path.join(LIB, 'revision-states.ts'), ...files(path.join(LIB, 'mesh'))]) {
			const text = readFileSync(f, 'utf8');
			if (/from '(@sveltejs\/kit[^']*|\$app\/[^']*|drizzle-orm[^']*|mysql2[^']*)'|from '[^']*\/server\//.test(text)) offenders.push(path.relative(LIB, f));
		}
		expect(offenders).toEqual([]);
	});
});
