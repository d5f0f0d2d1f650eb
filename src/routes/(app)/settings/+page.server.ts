import { fail } from '@sveltejs/kit';
import { and, desc, eq, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { hashToken, randomToken, requireRole } from '$lib/server/auth';
import { audit } from '$lib/server/audit';
import { getDb } from '$lib/server/db';
import { apiToken } from '$lib/server/db/schema';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	const me = requireRole(locals);
	const tokens = await getDb()
		.select({ id: apiToken.id, name: apiToken.name, prefix: apiToken.prefix, createdAt: apiToken.createdAt, lastUsedAt: apiToken.lastUsedAt, revokedAt: apiToken.revokedAt })
		.from(apiToken)
		.where(eq(apiToken.userId, me.id))
		.orderBy(desc(apiToken.id));
	return { tokens };
};

const nameSchema = z.string().trim().min(1, 'Give the token a name, e.g. the pipeline that uses it.').max(80, 'At most 80 characters.');

export const actions: Actions = {
	create: async ({ request, locals }) => {
		const me = requireRole(locals);
		const parsed = nameSchema.safeParse((await request.formData()).get('name') ?? '');
		if (!parsed.success) return fail(400, { tokenError: parsed.error.issues[0].message });
		const token = `sg_${randomToken()}`;
		const db = getDb();
		await db.transaction(async (tx) => {
			const [res] = await tx.insert(apiToken).values({ userId: me.id, name: parsed.data, prefix: token.slice(0, 10), tokenHash: hashToken(token) }).$returningId();
			await audit(tx, me.id, 'api_token', res.id, 'created');
		});
		// Shown once; only its hash is stored.
		return { newToken: token, newTokenName: parsed.data };
	},
	revoke: async ({ request, locals }) => {
		const me = requireRole(locals);
		const fd = await request.formData();
		const id = Number(fd.get('id'));
		if (!Number.isInteger(id)) return fail(400, { tokenError: 'Unknown token.' });
		const db = getDb();
		// Revoking stops every pipeline that uses the token, so the first post only asks.
		if (fd.get('confirm') !== 'yes') {
			const [t] = await db.select({ name: apiToken.name }).from(apiToken).where(and(eq(apiToken.id, id), eq(apiToken.userId, me.id), isNull(apiToken.revokedAt))).limit(1);
			if (!t) return fail(404, { tokenError: 'No such token of yours.' });
			return { confirmRevoke: { id, name: t.name } };
		}
		const [res] = await db.update(apiToken).set({ revokedAt: new Date() }).where(and(eq(apiToken.id, id), eq(apiToken.userId, me.id)));
		if (res.affectedRows === 0) return fail(404, { tokenError: 'No such token of yours.' });
		await audit(db, me.id, 'api_token', id, 'revoked');
		return { revoked: id };
	}
};
