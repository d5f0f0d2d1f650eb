import { parseOverride } from '$lib/server/repair-limits';
import { error, fail, redirect } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
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
import { actionResult, formFailure, formResult, raiseForPage } from '$lib/server/errors';
import { commentFormSchema, returnFormSchema, signOffFormSchema } from '$lib/forms';
import { recipeFormSchema, rowToStep, stepToRow } from '$lib/recipe-form';
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
			standardRecipe: standardRecipe(detail.project.targetCellSize),
			commentForm: await superValidate(zod4(commentFormSchema), { id: 'comment' }),
			returnForm: await superValidate(zod4(returnFormSchema), { id: 'return' }),
			signOffForm: await superValidate(zod4(signOffFormSchema), { id: 'sign-off' }),
			recipeForm: await superValidate({ name: 'standard', intent: 'propose', steps: standardRecipe(detail.project.targetCellSize).map(stepToRow) }, zod4(recipeFormSchema), { id: 'recipe', errors: false })
		};
	} catch (e) {
		raiseForPage(e);
	}
};

export const actions: Actions = {
	comment: async ({ locals, params, request }) => {
		const me = requireRole(locals);
		const form = await superValidate(request, zod4(commentFormSchema));
		if (!form.valid) return fail(400, { form });
		let point: unknown = null;
		try {
			point = form.data.point ? JSON.parse(form.data.point) : null;
		} catch {
			return message(form, 'The comment point must be JSON like [x, y, z].', { status: 400 });
		}
		return formResult(form, async () => {
			await addComment(getDb(), me, revId(params.id), commentSchema.parse({ body: form.data.body, point, face: form.data.face }));
			return message(form, 'Comment added.');
		});
	},
	recheck: async ({ locals, params }) =>
		guarded(async () => {
			const me = requireRole(locals, 'engineer');
			const db = getDb();
			await recheck(db, me, await loadRevisionForUser(db, me, revId(params.id)));
			return { rechecked: true };
		}),
	return: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'engineer', 'reviewer');
		const form = await superValidate(request, zod4(returnFormSchema));
		if (!form.valid) return fail(400, { form });
		return formResult(form, async () => {
			const db = getDb();
			await returnRevision(db, me, await loadRevisionForUser(db, me, revId(params.id)), form.data.reason);
			return message(form, 'Returned to the designer.');
		});
	},
	repair: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'engineer');
		const fd = await request.formData();
		let form;
		if (fd.has('__superform_json')) form = await superValidate(fd, zod4(recipeFormSchema));
		else {
			// Posted without the form's script (a one-click fix, or a script): `steps` is the recipe as
			// JSON text, checked by the same validator as the API's recipes, then by the form's schema.
			form = await superValidate(zod4(recipeFormSchema), { id: String(fd.get('__superform_id') ?? 'recipe') });
			let steps;
			try {
				steps = checkRecipe(String(fd.get('steps') ?? ''));
			} catch (e) {
				return formFailure(form, e);
			}
			const name = String(fd.get('name') ?? '').slice(0, 120);
			form = await superValidate({ name, intent: fd.get('save') === '1' ? 'save' : 'propose', steps: steps.map(stepToRow) }, zod4(recipeFormSchema), { id: form.id });
		}
		if (!form.valid) return fail(400, { form });
		return formResult(form, async () => {
			const steps = checkRecipe(form.data.steps.map(rowToStep));
			const name = form.data.name.trim();
			if (form.data.intent === 'save') {
				const db = getDb();
				const ctx = await loadRevisionForUser(db, me, revId(params.id));
				await saveRecipe(db, me, ctx.project.slug, name, steps);
				return message(form, `Recipe “${name}” saved on the project.`);
			}
			await proposeRepair(getDb(), me, revId(params.id), steps, name || 'custom');
			return message(form, 'Repair queued.');
		});
	},
	signOff: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'reviewer');
		const form = await superValidate(request, zod4(signOffFormSchema));
		if (!form.valid) return fail(400, { form });
		const res = await formResult(form, async () => {
			const db = getDb();
			await signOff(db, me, await loadRevisionForUser(db, me, revId(params.id)), form.data.note || null, parseOverride(form.data.overrideReason));
			return null;
		});
		if (res) return res;
		redirect(303, `/revisions/${params.id}/clearance`);
	}
};
