// Proposing repairs: a recipe applied to a revision becomes a repair job; recipes can be saved on a
// project and applied to every held revision of a batch.
import { and, asc, eq, inArray, sql } from 'drizzle-orm';
import { parseRecipe, STANDARD_RECIPE, type RepairStep } from '../mesh/repair';
import { audit } from './audit';
import type { SessionUser } from './auth';
import { config } from './config';
import type { Db } from './db';
import { job, part, recipe, revision } from './db/schema';
import { enqueueRepair } from './jobs/queue';
import { jobsQueued } from './jobs/wake';
import type { RepairPayload } from './jobs/repair';
import { assertCan, findProjectForUser, loadRevisionForUser } from './revisions';
import { DomainError } from '../domain-error';

export const REPAIRABLE = ['held', 'clear', 'returned'] as const;

export function checkRecipe(raw: unknown): RepairStep[] {
	try {
		return parseRecipe(raw);
	} catch (e) {
		throw new DomainError('invalid', `The recipe is not valid: ${(e as Error).message}`);
	}
}

export function standardRecipe(targetCellSize: number): RepairStep[] {
	return STANDARD_RECIPE(targetCellSize);
}

export async function proposeRepair(db: Db, u: SessionUser, revisionId: number, steps: RepairStep[], recipeName: string): Promise<void> {
	assertCan(u, 'repair');
	const ctx = await loadRevisionForUser(db, u, revisionId);
	if (!(REPAIRABLE as readonly string[]).includes(ctx.rev.status)) {
		throw new DomainError('conflict', `A repair starts from a held, clear or returned revision; this one is "${ctx.rev.status.replace(/-/g, ' ')}".`);
	}
	await db.transaction(async (txx) => {
		const tx = txx as unknown as Db;
		const [pending] = await tx
			.select({ id: job.id })
			.from(job)
			.where(and(eq(job.revisionId, ctx.rev.id), eq(job.kind, 'repair'), inArray(job.status, ['queued', 'running'])))
			.limit(1);
		if (pending) throw new DomainError('conflict', 'A repair of this revision is already running.');
		const payload: RepairPayload = { steps, requestedBy: u.id, recipeName: recipeName.slice(0, 120) };
		await enqueueRepair(tx, ctx.rev.id, payload, config.checkAttempts);
		await audit(tx, u.id, 'revision', ctx.rev.id, 'repair-requested', null, null, { recipe: recipeName, steps: steps.length });
	});
	jobsQueued();
}

export async function saveRecipe(db: Db, u: SessionUser, projectSlug: string, name: string, steps: RepairStep[]): Promise<number> {
	assertCan(u, 'repair');
	const p = await findProjectForUser(db, u, projectSlug);
	if (!name.trim()) throw new DomainError('invalid', 'Give the recipe a name.');
	return db.transaction(async (tx) => {
		const [r] = await tx.insert(recipe).values({ projectId: p.id, name: name.trim().slice(0, 120), steps, createdBy: u.id }).$returningId();
		await audit(tx, u.id, 'recipe', r.id, 'saved', null, null, { project: p.slug });
		return r.id;
	});
}

export async function projectRecipes(db: Db, projectId: number) {
	const rows = await db.select().from(recipe).where(eq(recipe.projectId, projectId)).orderBy(asc(recipe.name));
	return rows.map((r) => ({ id: r.id, name: r.name, steps: r.steps as RepairStep[] }));
}

/**
 * The held revisions a batch repair starts from: those no repair was made from yet, so repairing
 * twice does not repair the same shape twice. A project: of each part only its newest revision (a
 * superseded one is not what goes to the solver). A generator run: its held revisions (of an
 * iterations run every held iteration counts, not only the part's newest).
 */
function batchHeldWhere(projectId: number, runId: number | null) {
	const notRepaired = sql`not exists (select 1 from ${revision} as repair_child where repair_child.parent_revision_id = ${revision.id})`;
	if (runId === null) return and(eq(part.projectId, projectId), eq(revision.status, 'held'), eq(part.latestRevisionId, revision.id), notRepaired);
	return and(eq(part.projectId, projectId), eq(revision.runId, runId), eq(revision.status, 'held'), notRepaired);
}

/** How many revisions a batch repair of the project (or of one of its runs) would start from. */
export async function countBatchHeld(db: Db, projectId: number, runId: number | null = null): Promise<number> {
	const [r] = await db.select({ n: sql<number>`count(*)` }).from(revision).innerJoin(part, eq(part.id, revision.partId)).where(batchHeldWhere(projectId, runId));
	return Number(r?.n ?? 0);
}

/**
 * Applies a saved (or the standard) recipe to the held newest revision of each part of a project, or
 * with `runId` to the held revisions of that run, in both cases those not repaired yet (countBatchHeld). The
 * repairs land in the same run (jobs/repair.ts).
 */
export async function repairBatch(db: Db, u: SessionUser, projectSlug: string, recipeId: number | null, runId: number | null = null): Promise<{ queued: number; skipped: number }> {
	assertCan(u, 'repair');
	const p = await findProjectForUser(db, u, projectSlug);
	let steps: RepairStep[];
	let name = 'standard';
	if (recipeId) {
		const [r] = await db.select().from(recipe).where(and(eq(recipe.id, recipeId), eq(recipe.projectId, p.id))).limit(1);
		if (!r) throw new DomainError('not-found', 'No such recipe in this project.');
		steps = checkRecipe(r.steps);
		name = r.name;
	} else steps = standardRecipe(p.targetCellSize);
	const held = await db
		.select({ id: revision.id })
		.from(revision)
		.innerJoin(part, eq(part.id, revision.partId))
		.where(batchHeldWhere(p.id, runId))
		.orderBy(asc(revision.id));
	let queued = 0;
	let skipped = 0;
	for (const h of held) {
		try {
			await proposeRepair(db, u, h.id, steps, name);
			queued++;
		} catch (e) {
			if (e instanceof DomainError && e.kind === 'conflict') skipped++;
			else throw e;
		}
	}
	return { queued, skipped };
}
