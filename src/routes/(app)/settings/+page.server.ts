import { fail } from '@sveltejs/kit';
import { and, desc, eq, isNull } from 'drizzle-orm';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { hashToken, randomToken, requireRole } from '$lib/server/auth';
import { audit } from '$lib/server/audit';
import { getDb } from '$lib/server/db';
import { apiToken } from '$lib/server/db/schema';
import { revokeFormSchema, tokenFormSchema } from '$lib/forms';
import type { Actions, PageServerLoad } from './$types';

const DAY_MS = 86_400_000;

export const load: PageServerLoad = async ({ locals }) => {
	const me = requireRole(locals);
	const tokens = await getDb()
		.select({ id: apiToken.id, name: apiToken.name, prefix: apiToken.prefix, createdAt: apiToken.createdAt, lastUsedAt: apiToken.lastUsedAt, revokedAt: apiToken.revokedAt, expiresAt: apiToken.expiresAt })
		.from(apiToken)
		.where(eq(apiToken.userId, me.id))
		.orderBy(desc(apiToken.id));
	return {
		tokens,
		tokenForm: await superValidate(zod4(tokenFormSchema), { id: 'token' }),
		revokeForm: await superValidate(zod4(revokeFormSchema), { id: 'revoke' }),
		confirmForm: await superValidate(zod4(revokeFormSchema), { id: 'revoke-confirm' })
	};
};

export const actions: Actions = {
	create: async ({ request, locals }) => {
		const me = requireRole(locals);
		const form = await superValidate(request, zod4(tokenFormSchema));
		if (!form.valid) return fail(400, { form });
		const token = `sg_${randomToken()}`;
		const days = form.data.expiresInDays;
		// Whole seconds: the column keeps no fractions, and the list shows the same moment the check uses.
		const expiresAt = days ? new Date(Math.floor((Date.now() + days * DAY_MS) / 1000) * 1000) : null;
		const db = getDb();
		await db.transaction(async (tx) => {
			const [res] = await tx.insert(apiToken).values({ userId: me.id, name: form.data.name, prefix: token.slice(0, 10), tokenHash: hashToken(token), expiresAt }).$returningId();
			await audit(tx, me.id, 'api_token', res.id, 'created', null, null, { expiresAt: expiresAt?.toISOString() ?? null });
		});
		// Shown once; only its hash is stored.
		const name = form.data.name;
		form.data.name = '';
		return { form, newToken: token, newTokenName: name, newTokenExpires: expiresAt };
	},
	revoke: async ({ request, locals }) => {
		const me = requireRole(locals);
		const form = await superValidate(request, zod4(revokeFormSchema));
		if (!form.valid) return message(form, 'Unknown token.', { status: 400 });
		const { id } = form.data;
		const db = getDb();
		// Revoking stops every pipeline that uses the token, so the first post only asks.
		if (form.data.confirm !== 'yes') {
			const [t] = await db.select({ name: apiToken.name }).from(apiToken).where(and(eq(apiToken.id, id), eq(apiToken.userId, me.id), isNull(apiToken.revokedAt))).limit(1);
			if (!t) return message(form, 'No such token of yours.', { status: 404 });
			return { form, confirmRevoke: { id, name: t.name } };
		}
		const [res] = await db.update(apiToken).set({ revokedAt: new Date() }).where(and(eq(apiToken.id, id), eq(apiToken.userId, me.id)));
		if (res.affectedRows === 0) return message(form, 'No such token of yours.', { status: 404 });
		await audit(db, me.id, 'api_token', id, 'revoked');
		return { form, revoked: id };
	}
};
