import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getDb } from '../db';
import { useFreshDatabase } from '../testing/db';
import { accessFor } from './guard';
import { hashPassword, verifyPassword } from './password';
import { clearSignInFailures, recordSignInFailure, requireRole, SIGN_IN_LIMITS, signInBlocked, type SessionUser } from '.';

let drop: () => Promise<void>;
beforeAll(async () => ({ drop } = await useFreshDatabase('auth')));
afterAll(() => drop());

const locals = (user: SessionUser | null) => ({ user, session: null }) as App.Locals;
const person = (roles: SessionUser['roles']): SessionUser => ({ id: 'u1', email: 'x@example.test', name: 'X', teamId: 1, roles });

describe('passwords', () => {
	it('verifies an argon2id hash and rejects a wrong password', async () => {
		const h = await hashPassword('correct horse battery');
		expect(h.startsWith('$argon2id$')).toBe(true);
		expect(await verifyPassword(h, 'correct horse battery')).toBe(true);
		expect(await verifyPassword(h, 'wrong')).toBe(false);
		expect(await verifyPassword('not-a-hash', 'x')).toBe(false);
	});
});

describe('sign-in limits on the real MariaDB', () => {
	it(`blocks an account after ${SIGN_IN_LIMITS.perAccount} failures and lets it in again once cleared`, async () => {
		const db = getDb();
		for (let i = 0; i < SIGN_IN_LIMITS.perAccount - 1; i++) await recordSignInFailure(db, 'a@example.test', '10.0.0.1');
		expect(await signInBlocked(db, 'a@example.test', '10.0.0.1')).toBeNull();
		await recordSignInFailure(db, 'a@example.test', '10.0.0.1');
		expect(await signInBlocked(db, 'a@example.test', '10.0.0.9')).toMatch(/Too many failed sign-ins for this account/);
		await clearSignInFailures(db, 'a@example.test');
		expect(await signInBlocked(db, 'a@example.test', '10.0.0.9')).toBeNull();
	});

	it('blocks an address that fails across many accounts', async () => {
		const db = getDb();
		for (let i = 0; i < SIGN_IN_LIMITS.perAddress; i++) await recordSignInFailure(db, `p${i}@example.test`, '10.0.0.2');
		expect(await signInBlocked(db, 'fresh@example.test', '10.0.0.2')).toMatch(/network address/);
	});
});

describe('role guard', () => {
	it('answers 401 when signed out and 403 for a missing role', () => {
		expect(() => requireRole(locals(null))).toThrow(expect.objectContaining({ status: 401 }));
		expect(() => requireRole(locals(person(['designer'])), 'admin')).toThrow(expect.objectContaining({ status: 403 }));
		expect(requireRole(locals(person(['designer', 'reviewer'])), 'reviewer').id).toBe('u1');
	});

	it('maps paths to access rules', () => {
		expect(accessFor('/sign-in')).toBe('public');
		expect(accessFor('/invite/abc')).toBe('public');
		expect(accessFor('/admin/users')).toEqual(['admin']);
		expect(accessFor('/administrator')).toBe('signed-in');
		expect(accessFor('/api/v1/queue')).toBe('signed-in');
		expect(accessFor('/queue')).toBe('signed-in');
	});
});
