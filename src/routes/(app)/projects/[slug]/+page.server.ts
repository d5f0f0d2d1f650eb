import { error, fail } from '@sveltejs/kit';
import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import { z } from 'zod';
import { DEFAULT_GATE_RULES, gateRulesSchema } from '$lib/gate/profile';
import { requireRole } from '$lib/server/auth';
import { audit } from '$lib/server/audit';
import { getDb } from '$lib/server/db';
import { gateProfile, part, project, revision, user } from '$lib/server/db/schema';
import { projectRecipes, repairBatch } from '$lib/server/repairs';
import { failFor } from '$lib/server/errors';
import { recheckStale, staleRevisionIds } from '$lib/server/recheck-stale';
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
	return {
		project: p,
		rules: gateRulesSchema.parse(profiles[0]?.rules ?? DEFAULT_GATE_RULES),
		profiles: profiles.map((x) => ({ ...x, rules: gateRulesSchema.parse(x.rules) })),
		parts,
		partsPage: { page: pageNo, pages: Math.max(1, Math.ceil(Number(partCount) / PARTS_PER_PAGE)), total: Number(partCount), perPage: PARTS_PER_PAGE },
		recipes: await projectRecipes(db, p.id),
		stale: (await staleRevisionIds(db, p.id)).length,
		held: Number((await db.select({ n: sql<number>`count(*)` }).from(revision).innerJoin(part, eq(part.id, revision.partId)).where(and(eq(part.projectId, p.id), eq(revision.status, 'held'))))[0].n)
	};
};

const num = (v: FormDataEntryValue | null) => (v === null || v === '' ? null : Number(v));

const settingsSchema = z.object({
	units: z.enum(['mm', 'm', 'in']),
	targetCellSize: z.number().positive('The target cell size must be positive.').max(1e6),
	flow: z.tuple([z.number(), z.number(), z.number()]).refine((f) => Math.hypot(...f) > 0, 'The flow direction cannot be zero.')
});

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
		const raw = String((await request.formData()).get('recipe') ?? '');
		try {
			const res = await repairBatch(getDb(), me, params.slug, raw && raw !== 'standard' ? Number(raw) : null);
			return { batchQueued: res.queued, batchSkipped: res.skipped };
		} catch (e) {
			return failFor(e, 'batchError');
		}
	},
	profile: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'admin');
		const p = await findProject(me.teamId, params.slug);
		const fd = await request.formData();
		const minVal = num(fd.get('minEdgeValue'));
		const parsed = gateRulesSchema.safeParse({
			closed: fd.has('closed'),
			manifold: fd.has('manifold'),
			outwardOriented: fd.has('outwardOriented'),
			noSelfIntersections: fd.has('noSelfIntersections'),
			minEdgeLength: minVal === null ? null : { mode: fd.get('minEdgeMode'), value: minVal },
			maxShells: num(fd.get('maxShells')),
			expectedGenus: num(fd.get('expectedGenus')),
			maxDegenerateFaces: num(fd.get('maxDegenerateFaces')) ?? 0,
			expectedSize:
				fd.get('sizeMode') === 'cells' || fd.get('sizeMode') === 'absolute'
					? { mode: fd.get('sizeMode'), min: num(fd.get('sizeMin')), max: num(fd.get('sizeMax')) }
					: null,
			minWallGapCells: num(fd.get('minWallGapCells')),
			repairLimits: repairLimitsFromForm(fd)
		});
		if (!parsed.success) return fail(400, { profileError: parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ') });
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
		return { profileSaved: version };
	},
	settings: async ({ locals, params, request }) => {
		const me = requireRole(locals, 'admin');
		const p = await findProject(me.teamId, params.slug);
		const fd = await request.formData();
		const parsed = settingsSchema.safeParse({
			units: fd.get('units'),
			targetCellSize: Number(fd.get('targetCellSize')),
			flow: [Number(fd.get('flowX')), Number(fd.get('flowY')), Number(fd.get('flowZ'))]
		});
		if (!parsed.success) return fail(400, { settingsError: parsed.error.issues[0].message });
		const db = getDb();
		await db.transaction(async (tx) => {
			await tx.update(project).set({ units: parsed.data.units, targetCellSize: parsed.data.targetCellSize, flowX: parsed.data.flow[0], flowY: parsed.data.flow[1], flowZ: parsed.data.flow[2] }).where(eq(project.id, p.id));
			await audit(tx, me.id, 'project', p.id, 'settings-changed', null, null, parsed.data);
		});
		return { settingsSaved: true };
	}
};

/** The repair-limit fields of the profile form; a blank field keeps its default. */
function repairLimitsFromForm(fd: FormData) {
	const n = (k: string) => {
		const v = fd.get(k);
		return v === null || String(v).trim() === '' ? undefined : Number(v);
	};
	const devValue = n('rlDevValue');
	return {
		maxVolumeChangePercent: n('rlVolume'),
		maxAreaChangePercent: n('rlArea'),
		maxFaceChangePercent: n('rlFaces'),
		maxDeviation: devValue === undefined ? undefined : { mode: fd.get('rlDevMode') ?? 'fraction-of-cell', value: devValue }
	};
}
