// One-time links that let a person set a password: invitations (7 days) and resets (1 hour).
// Both the invite and the reset routes use these load and action helpers.
import { error, fail, redirect, type Cookies } from '@sveltejs/kit';
import { and, eq, gt, isNull } from 'drizzle-orm';
import { superValidate, setError } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { config } from '../config';
import { getDb, type Db } from '../db';
import { user, userToken } from '../db/schema';
import { simpleMail, queueMail } from '../mail';
import { getLucia, hashPassword, hashToken, randomToken } from '.';
import { setPasswordSchema } from './forms';

const LIFETIME_MS = { invite: 7 * 24 * 3600_000, reset: 3600_000 } as const;

type Tx = Pick<Db, 'insert'>;

export async function createPasswordLink(tx: Tx, userId: string, kind: 'invite' | 'reset'): Promise<string> {
	const token = randomToken();
	await tx.insert(userToken).values({
		tokenHash: hashToken(token),
		userId,
		kind,
		expiresAt: new Date(Date.now() + LIFETIME_MS[kind])
	});
	return `${config.origin}/${kind === 'invite' ? 'invite' : 'reset'}/${token}`;
}

export async function queueInviteMail(tx: Tx, to: string, name: string, invitedBy: string, userId: string) {
	const link = await createPasswordLink(tx, userId, 'invite');
	await queueMail(
		tx,
		simpleMail(to, 'You are invited to Shellgate', [
			`Hello ${name},`,
			`${invitedBy} has invited you to Shellgate, where the team checks meshes before they go to the CFD solver.`,
			'Open the link below within 7 days to choose your password.'
		], { href: link, label: 'Choose a password' })
	);
}

async function findLink(db: Db, token: string, kind: 'invite' | 'reset') {
	const [row] = await db
		.select({ tokenHash: userToken.tokenHash, userId: userToken.userId, email: user.email, name: user.name })
		.from(userToken)
		.innerJoin(user, eq(user.id, userToken.userId))
		.where(
			and(
				eq(userToken.tokenHash, hashToken(token)),
				eq(userToken.kind, kind),
				isNull(userToken.usedAt),
				gt(userToken.expiresAt, new Date())
			)
		)
		.limit(1);
	return row;
}

export function passwordLinkRoute(kind: 'invite' | 'reset') {
	return {
		load: async ({ params }: { params: { token: string } }) => {
			const link = await findLink(getDb(), params.token, kind);
			if (!link) error(404, 'This link has expired or was already used. Ask an admin for a new one, or request a password reset.');
			return { kind, email: link.email, name: link.name, form: await superValidate(zod4(setPasswordSchema)) };
		},
		actions: {
			default: async ({ request, params, cookies, url }: { request: Request; params: { token: string }; cookies: Cookies; url: URL }) => {
				const form = await superValidate(request, zod4(setPasswordSchema));
				if (!form.valid) return fail(400, { form });
				const db = getDb();
				const link = await findLink(db, params.token, kind);
				if (!link) return setError(form, 'password', 'This link has expired or was already used.');
				const passwordHash = await hashPassword(form.data.password);
				await db.transaction(async (tx) => {
					await tx.update(user).set({ passwordHash }).where(eq(user.id, link.userId));
					await tx.update(userToken).set({ usedAt: new Date() }).where(eq(userToken.tokenHash, link.tokenHash));
				});
				const lucia = getLucia();
				await lucia.invalidateUserSessions(link.userId);
				const session = await lucia.createSession(link.userId, {});
				const c = lucia.createSessionCookie(session.id);
				cookies.set(c.name, c.value, { ...c.attributes, secure: url.protocol === 'https:', path: '/' });
				redirect(303, '/queue');
			}
		}
	};
}
