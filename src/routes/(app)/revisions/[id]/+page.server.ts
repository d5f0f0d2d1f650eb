import { parseOverride } from '$lib/server/repair-limits';
import { error, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { run } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/auth';
import { addComment, commentSchema } from '$lib/server/comments';
import { getDb } from '$lib/server/db';
import { partHistory, revisionDetail } from '$lib/server/revision-detail';
import { checkRecipe, projectRecipes, proposeRepair, saveRecipe, standardRecipe } from '$lib/server/repairs';
import { DomainError } from '$lib/domain-error';
import { fourEyesConflict, recheck, returnRevision, signOff } from '$lib/server/decisions';
import { actionResult, raiseForPage } from '$lib/server/errors';
import { loadRevisionForUser } from '$lib/server/revisions';
import type { Actions, PageServerLoad } from './$types';

function revId(raw: string): number {
	if (!/^\d{1,10}$/.test(raw)) error(404, `No revision "${raw.slice(0, 40)}".`);
	return Number(raw);
}

const guarded = <T>(fn: () => Promise<T>) => actionResult(fn);

export const load: PageServerLoad = async ({ locals, params }) => {
	const me = requireRole(locals);
	const db = getDb();
	try {
		const detail = await revisionDetail(db, me, revId(params.id));
		const ctx = await loadRevisionForUser(db, me, detail.id);
		const [fromRun] = ctx.rev.runId === null ? [] : await db.select({ id: run.id, name: run.name, kind: run.kind }).from(run).where(eq(run.id, ctx.rev.runId)).limit(1);
		return {
			run: fromRun ? { ...fromRun, iteration: ctx.rev.iteration } : null,
			detail,
			history: await partHistory(db, detail.part.id),
			fourEyes: fourEyesConflict(me, ctx),
			recipes: await projectRecipes(db, detail.project.id),
			standardRecipe: standardRecipe(detail.project.targetCellSize)
		};
	} catch (e) {
		raiseForPage(e);
	}
};

export const actions: Actions = {
	comment: async ({ locals, params, request }) =>
		guarded(async () => {
			const me = requireRole(locals);
			const fd = await request.formData();
			let point: unknown = null;
			try {
				point = fd.get('point') ? JSON.parse(String(fd.get('point'))) : null;
			} catch {
				throw new DomainError('invalid', 'The comment point must be JSON like [x, y, z].');
			}
			const face = fd.get('face') ? Number(fd.get('face')) : null;
			await addComment(getDb(), me, revId(params.id), commentSchema.parse({ body: fd.get('body') ?? '', point, face }));
			return { commented: true };
		}),
	recheck: async ({ locals, params }) =>
		guarded(async () => {
			const me = requireRole(locals, 'engineer');
			const db = getDb();
			await recheck(db, me, await loadRevisionForUser(db, me, revId(params.id)));
			return { rechecked: true };
		}),
	return: async ({ locals, params, request }) =>
		guarded(async () => {
			const me = requireRole(locals, 'engineer', 'reviewer');
			const reason = String((await request.formData()).get('reason') ?? '').slice(0, 1000);
			const db = getDb();
			await returnRevision(db, me, await loadRevisionForUser(db, me, revId(params.id)), reason);
			return { returned: true };
		}),
	repair: async ({ locals, params, request }) =>
		guarded(async () => {
			const me = requireRole(locals, 'engineer');
			const fd = await request.formData();
			const steps = checkRecipe(String(fd.get('steps') ?? ''));
			const name = String(fd.get('name') ?? '').trim();
			if (fd.get('save') === '1') {
				const db = getDb();
				const ctx = await loadRevisionForUser(db, me, revId(params.id));
				await saveRecipe(db, me, ctx.project.slug, name, steps);
				return { recipeSaved: name };
			}
			await proposeRepair(getDb(), me, revId(params.id), steps, name || 'custom');
			return { repairQueued: true };
		}),
	signOff: async ({ locals, params, request }) => {
		const res = await guarded(async () => {
			const me = requireRole(locals, 'reviewer');
			const fd = await request.formData();
			const note = String(fd.get('note') ?? '').slice(0, 1000);
			const db = getDb();
			await signOff(db, me, await loadRevisionForUser(db, me, revId(params.id)), note || null, parseOverride(fd.get('overrideReason')));
			return null;
		});
		if (res) return res;
		redirect(303, `/revisions/${params.id}/clearance`);
	}
};
