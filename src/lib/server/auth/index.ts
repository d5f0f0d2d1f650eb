// Sessions (lucia over Drizzle/MariaDB), passwords (argon2id), sign-in limits and the role guard.
import { DrizzleMySQLAdapter } from '@lucia-auth/adapter-drizzle';
import { error } from '@sveltejs/kit';
import { and, eq, gt, lt, sql } from 'drizzle-orm';
import { Lucia } from 'lucia';
import { getDb, type Db } from '../db';
import { ROLES, session, signInFailure, user, userRole, type Role } from '../db/schema';

export { ROLES, type Role };
export { hashPassword, verifyPassword, randomToken, hashToken, newUserId } from './password';

export interface SessionUser {
	id: string;
	email: string;
	name: string;
	teamId: number;
	roles: Role[];
}

let lucia: Lucia | undefined;

export function getLucia(): Lucia {
	lucia ??= new Lucia(new DrizzleMySQLAdapter(getDb(), session, user), {
		sessionCookie: {
			name: 'shellgate_session',
			// `secure` is decided per request from the URL (https or not), see setSessionCookie.
			attributes: { sameSite: 'lax', secure: false }
		}
	});
	return lucia;
}

export async function loadSessionUser(db: Db, userId: string): Promise<SessionUser | null> {
	const rows = await db.select().from(user).where(eq(user.id, userId)).limit(1);
	const u = rows[0];
	if (!u || u.disabled) return null;
	const roles = await db.select({ role: userRole.role }).from(userRole).where(eq(userRole.userId, userId));
	return { id: u.id, email: u.email, name: u.name, teamId: u.teamId, roles: roles.map((r) => r.role) };
}

export function hasRole(u: SessionUser | null | undefined, ...roles: Role[]): boolean {
	return !!u && roles.some((r) => u.roles.includes(r));
}

/**
 * The one guard used by every load function and action: 401 when signed out, 403 when the user
 * holds none of the given roles. With no roles it only requires a signed-in user.
 */
export function requireRole(locals: App.Locals, ...roles: Role[]): SessionUser {
	const u = locals.user;
	if (!u) error(401, 'Sign in to continue.');
	if (roles.length > 0 && !hasRole(u, ...roles)) {
		error(403, `This needs the ${roles.join(' or ')} role; your account has ${u.roles.join(', ') || 'no roles'}.`);
	}
	return u;
}

/** Sign-in limits: failures within the window, per account and per client address. */
export const SIGN_IN_LIMITS = { windowMinutes: 15, perAccount: 5, perAddress: 30 } as const;

export async function signInBlocked(db: Db, email: string, address: string): Promise<string | null> {
	const since = new Date(Date.now() - SIGN_IN_LIMITS.windowMinutes * 60_000);
	const [acc] = await db
		.select({ n: sql<number>`count(*)` })
		.from(signInFailure)
		.where(and(eq(signInFailure.email, email), gt(signInFailure.at, since)));
	if (Number(acc.n) >= SIGN_IN_LIMITS.perAccount) {
		return `Too many failed sign-ins for this account. Wait ${SIGN_IN_LIMITS.windowMinutes} minutes or ask an admin for a password reset.`;
	}
	const [adr] = await db
		.select({ n: sql<number>`count(*)` })
		.from(signInFailure)
		.where(and(eq(signInFailure.address, address), gt(signInFailure.at, since)));
	if (Number(adr.n) >= SIGN_IN_LIMITS.perAddress) {
		return `Too many failed sign-ins from your network address. Wait ${SIGN_IN_LIMITS.windowMinutes} minutes and try again.`;
	}
	return null;
}

export async function recordSignInFailure(db: Db, email: string, address: string): Promise<void> {
	await db.insert(signInFailure).values({ email, address });
	await db.delete(signInFailure).where(lt(signInFailure.at, new Date(Date.now() - 24 * 3600_000)));
}

export async function clearSignInFailures(db: Db, email: string): Promise<void> {
	await db.delete(signInFailure).where(eq(signInFailure.email, email));
}
