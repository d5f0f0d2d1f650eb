import { error, fail } from '@sveltejs/kit';
import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { z } from 'zod';
import { DEFAULT_GATE_RULES, gateRulesSchema } from '$lib/gate/profile';
import { requireRole } from '$lib/server/auth';
import { audit } from '$lib/server/audit';
import { getDb } from '$lib/server/db';
import { gateProfile, part, project, revision, user } from '$lib/server/db/schema';
import { countBatchHeld, projectRecipes, repairBatch } from '$lib/server/repairs';
import { failFor, formFailure } from '$lib/server/errors';
import { batchRepairFormSchema, profileFormFromRules, profileFormSchema, projectSettingsFormSchema, rulesFromProfileForm } from '$lib/forms';
import { projectRuns } from '$lib/server/runs';
import { recheckStale, staleRevisionIds } from '$lib/server/recheck-stale';
import { countCleared } from '$lib/server/dataset-export';
import type { Actions, PageServerLoad } from './$types';

async function findProject(teamId: number, slug: string) {
	const [p] = await getDb().select().from(project).where(and(eq(project.slug, slug), eq(project.teamId, teamId))).limit(1);
	if (!p) error(404, `No project "${slug.slice(0, 64)}" in your team.`);
	return p;
}

/** Parts on one page of the project page. */
const PARTS_PER_PAGE = 50;

export const load: PageServerLoad = async ({ locals, params, url }) => {
	const me = requireRole(locals);
	const p = await findProject(me.teamId, params.slug);
	const db = getDb();
	const profiles = await db
		.select({ id: gateProfile.id, version: gateProfile.version, rules: gateProfile.rules, createdAt: gateProfile.createdAt, by: user.name })
		.from(gateProfile)
		.leftJoin(user, eq(user.id, gateProfile.createdBy))
		.where(eq(gateProfile.projectId, p.id))
		.orderBy(desc(gateProfile.version));
	// One page of parts by name (the part_slug index gives the count; the page's revision counts are
	// counted for its parts only), with each part's newest revision and its state from the part row.
	const pageNo = Math.min(100_000, Math.max(1, Math.floor(Number(url.searchParams.get('page')) || 1)));
	const [[{ n: partCount }], pageParts] = await Promise.all([
		db.select({ n: sql<number>`count(*)` }).from(part).where(eq(part.projectId, p.id)),
		db
			.select({ id: part.id, slug: part.slug, name: part.name, latest: part.latestRevisionId, latestStatus: part.latestStatus })
			.from(part)
			.where(eq(part.projectId, p.id))
			.orderBy(asc(part.name), asc(part.id))
			.limit(PARTS_PER_PAGE)
			.offset((pageNo - 1) * PARTS_PER_PAGE)
	]);
	const revCounts = pageParts.length
		? await db
				.select({ partId: revision.partId, n: sql<number>`count(*)` })
				.from(revision)
				.where(inArray(revision.partId, pageParts.map((x) => x.id)))
				.groupBy(revision.partId)
		: [];
	const nRevs = new Map(revCounts.map((c) => [c.partId, Number(c.n)]));
	const parts = pageParts.map((x) => ({ ...x, revisions: nRevs.get(x.id) ?? 0 }));
	const rules = gateRulesSchema.parse(profiles[0]?.rules ?? DEFAULT_GATE_RULES);
	return {
		project: p,
		rules,
		settingsForm: await superValidate({ units: p.units, targetCellSize: p.targetCellSize, flowX: p.flowX, flowY: p.flowY, flowZ: p.flowZ }, zod4(projectSettingsFormSchema), { id: 'settings', errors: false }),
		profileForm: await superValidate(profileFormFromRules(rules), zod4(profileFormSchema), { id: 'profile', errors: false }),
		batchForm: await superValidate(zod4(batchRepairFormSchema), { id: 'batch' }),
		profiles: profiles.map((x) => ({ ...x, rules: gateRulesSchema.parse(x.rules) })),
		parts,
		partsPage: { page: pageNo, pages: Math.max(1, Math.ceil(Number(partCount) / PARTS_PER_PAGE)), total: Number(partCount), perPage: PARTS_PER_PAGE },
		recipes: await projectRecipes(db, p.id),
		runs: (await projectRuns(db, p.id)).map((r) => ({ ...r, revisions: Number(r.revisions) })),
		stale: (await staleRevisionIds(db, p.id)).length,
		cleared: await countCleared(db, { runId: null, projectId: p.id }),
		held: await countBatchHeld(db, p.id)
	};
};

export const actions: Actions = {
	recheckStale: async ({ locals, params }) => {
		const me = requireRole(locals, 'engineer');
		try {
			const res = await recheckStale(getDb(), me, params.slug);
			return { staleQueued: res.queued, staleSkipped: res.skipped };
		} catch (e) {
			return failFor(e, 'staleError');
		}
	},
	batchRepair: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'engineer');
		const form = await superValidate(request, zod4(batchRepairFormSchema));
		if (!form.valid) return fail(400, { form });
		const raw = form.data.recipe;
		if (raw !== 'standard' && !/^\d{1,10}$/.test(raw)) return message(form, 'No such recipe in this project.', { status: 404 });
		try {
			const res = await repairBatch(getDb(), me, params.slug, raw === 'standard' ? null : Number(raw));
			return message(form, `${res.queued} repairs queued${res.skipped ? `, ${res.skipped} already running` : ''}. Each becomes a new revision to review.`);
		} catch (e) {
			return formFailure(form, e);
		}
	},
	profile: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'admin');
		const p = await findProject(me.teamId, params.slug);
		const form = await superValidate(request, zod4(profileFormSchema));
		if (!form.valid) return fail(400, { form });
		const parsed = gateRulesSchema.safeParse(rulesFromProfileForm(form.data));
		if (!parsed.success) return message(form, parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; '), { status: 400 });
		const db = getDb();
		// A change never edits a version: it adds the next one, so past decisions keep theirs.
		const version = await db.transaction(async (tx) => {
			await tx.select().from(project).where(eq(project.id, p.id)).for('update');
			const [{ v }] = await tx.select({ v: sql<number>`coalesce(max(${gateProfile.version}), 0)` }).from(gateProfile).where(eq(gateProfile.projectId, p.id));
			const next = Number(v) + 1;
			await tx.insert(gateProfile).values({ projectId: p.id, version: next, rules: parsed.data, createdBy: me.id });
			await audit(tx, me.id, 'project', p.id, 'gate-profile-changed', String(v), String(next), parsed.data);
			return next;
		});
		return message(form, `Saved as version ${version}.`);
	},
	settings: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'admin');
		const p = await findProject(me.teamId, params.slug);
		const form = await superValidate(request, zod4(projectSettingsFormSchema));
		if (!form.valid) return fail(400, { form });
		const f = form.data;
		const parsed = { data: { units: f.units, targetCellSize: f.targetCellSize, flow: [f.flowX, f.flowY, f.flowZ] as [number, number, number] } };
		const db = getDb();
		await db.transaction(async (tx) => {
			await tx.update(project).set({ units: parsed.data.units, targetCellSize: parsed.data.targetCellSize, flowX: parsed.data.flow[0], flowY: parsed.data.flow[1], flowZ: parsed.data.flow[2] }).where(eq(project.id, p.id));
			await audit(tx, me.id, 'project', p.id, 'settings-changed', null, null, parsed.data);
		});
		return message(form, 'Saved.');
	}
};
