import { fail } from '@sveltejs/kit';
import { asc, eq } from 'drizzle-orm';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { newUserId, requireRole } from '$lib/server/auth';
import { inviteSchema } from '$lib/server/auth/forms';
import { queueInviteMail } from '$lib/server/auth/password-links';
import { audit } from '$lib/server/audit';
import { getDb } from '$lib/server/db';
import { user, userRole, type Role } from '$lib/server/db/schema';
import { rolesFormSchema } from '$lib/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	const me = requireRole(locals, 'admin');
	const db = getDb();
	const users = await db.select().from(user).where(eq(user.teamId, me.teamId)).orderBy(asc(user.email));
	const roles = await db.select().from(userRole);
	const byUser = new Map<string, Role[]>();
	for (const r of roles) byUser.set(r.userId, [...(byUser.get(r.userId) ?? []), r.role]);
	const rolesAdapter = zod4(rolesFormSchema);
	return {
		people: await Promise.all(
			users.map(async (u) => ({
				id: u.id,
				email: u.email,
				name: u.name,
				disabled: u.disabled,
				invited: !u.passwordHash,
				roles: byUser.get(u.id) ?? [],
				rolesForm: await superValidate({ userId: u.id, roles: byUser.get(u.id) ?? [] }, rolesAdapter, { id: `roles-${u.id}`, errors: false })
			}))
		),
		form: await superValidate(zod4(inviteSchema))
	};
};

export const actions: Actions = {
	invite: async ({ request, locals }) => {
		const me = requireRole(locals, 'admin');
		const form = await superValidate(request, zod4(inviteSchema));
		if (!form.valid) return fail(400, { form });
		const db = getDb();
		const [existing] = await db.select({ id: user.id }).from(user).where(eq(user.email, form.data.email)).limit(1);
		if (existing) return message(form, `${form.data.email} already has an account.`, { status: 400 });
		const id = newUserId();
		await db.transaction(async (tx) => {
			await tx.insert(user).values({ id, email: form.data.email, name: form.data.name, teamId: me.teamId });
			await tx.insert(userRole).values(form.data.roles.map((role) => ({ userId: id, role })));
			await queueInviteMail(tx, form.data.email, form.data.name, me.name, id);
			await audit(tx, me.id, 'user', id, 'invited', null, null, { roles: form.data.roles });
		});
		return message(form, `Invitation sent to ${form.data.email}.`);
	},
	roles: async ({ request, locals }) => {
		const me = requireRole(locals, 'admin');
		const form = await superValidate(request, zod4(rolesFormSchema));
		if (!form.valid) return message(form, 'Unknown role or user.', { status: 400 });
		const { userId, roles } = form.data;
		if (userId === me.id && !roles.includes('admin')) {
			return message(form, 'You cannot remove your own admin role; ask another admin.', { status: 400 });
		}
		const db = getDb();
		const [target] = await db.select().from(user).where(eq(user.id, userId)).limit(1);
		if (!target || target.teamId !== me.teamId) return message(form, 'No such person in your team.', { status: 404 });
		await db.transaction(async (tx) => {
			await tx.delete(userRole).where(eq(userRole.userId, userId));
			if (roles.length) await tx.insert(userRole).values(roles.map((role) => ({ userId, role })));
			await audit(tx, me.id, 'user', userId, 'roles-changed', null, null, { roles });
		});
		return message(form, 'saved');
	}
};
