// Generator runs: a named batch of uploads from one optimiser or network run. Finding or creating a
// run by name (safe when a pipeline's parallel requests all name it first), putting a file into it
// (which part, which iteration), and loading a run with its summary for the page and the API.
import { and, asc, eq, sql } from 'drizzle-orm';
import { audit } from './audit';
import type { SessionUser } from './auth';
import type { Db } from './db';
import { part, project, revision, run, type RunKind } from './db/schema';
import { ingestRevision, type IngestResult } from './ingest';
import { assertCan, findProjectForUser } from './revisions';
import { discard, type Spooled } from './storage';
import { DomainError } from '../domain-error';
import { cleanRunName, parseFileMeta, parseRunKind, partSlugFromName } from '../run-meta';
import { REVISION_STATES, type RevisionState } from '../revision-states';

export type RunRow = typeof run.$inferSelect;

const KIND_WORDS: Record<RunKind, string> = { samples: 'samples (each file its own part)', iterations: 'iterations (every file a revision of one part)' };

/**
 * The run `name` of the project, created on first use. Concurrent first requests are harmless: the
 * insert is idempotent on the (project, name) key and only the request whose insert took writes the
 * audit row. `kind` null takes the existing run's kind (samples for a new run); a kind other than the
 * existing run's is refused, since it would change what the earlier files mean.
 */
export async function findOrCreateRun(db: Db, u: SessionUser, projectId: number, rawName: string, kind: RunKind | null): Promise<{ run: RunRow; created: boolean }> {
	const name = cleanRunName(rawName);
	// INSERT IGNORE, not ON DUPLICATE KEY UPDATE: the pool's connections report found rows, so an
	// unchanged duplicate would count as one affected row there, and every request would look first.
	const [ins] = (await db.insert(run).ignore().values({ projectId, name, kind: kind ?? 'samples', createdBy: u.id })) as unknown as [{ affectedRows: number }];
	const [row] = await db.select().from(run).where(and(eq(run.projectId, projectId), eq(run.name, name))).limit(1);
	const created = ins.affectedRows === 1;
	if (created) await audit(db, u.id, 'run', row.id, 'created', null, null, { name, kind: row.kind, project: projectId });
	else if (kind && row.kind !== kind) {
		throw new DomainError('conflict', `The run "${name}" holds ${KIND_WORDS[row.kind]}, not ${kind}. Send kind "${row.kind}" (or none) for this run, or name a new run. Nothing was stored.`);
	}
	return { run: row, created };
}

/** A run of the caller's team with its project; not-found otherwise. */
export async function loadRunForUser(db: Db, u: SessionUser, id: number) {
	const [row] = await db
		.select({ run, project: { id: project.id, slug: project.slug, name: project.name, units: project.units, targetCellSize: project.targetCellSize } })
		.from(run)
		.innerJoin(project, eq(project.id, run.projectId))
		.where(and(eq(run.id, id), eq(project.teamId, u.teamId)))
		.limit(1);
	if (!row) throw new DomainError('not-found', `No run ${id} in your team.`);
	return row;
}

export interface RunFileInput {
	user: SessionUser;
	projectSlug: string;
	/** The run's name; null: a single upload, no run. */
	runName: string | null;
	/** As sent ("samples", "iterations" or empty); checked here. */
	runKind: string | null;
	/** The part named in the address or the request; null lets the run decide (meta.part, or the file name for samples). */
	partSlug: string | null;
	partName?: string;
	fileName: string;
	spooled: Spooled;
	/** The per-file metadata as sent (JSON text); checked here. */
	meta: string | null;
	source: 'upload' | 'api';
	note?: string | null;
}

export interface RunFileResult extends IngestResult {
	run: { id: number; name: string; kind: RunKind; created: boolean } | null;
	/** What the upload did to the part: made it, added a revision to it, or found the same file there already. */
	outcome: 'created-part' | 'new-revision' | 'duplicate';
	iteration: number | null;
}

/**
 * Puts one uploaded file into a run (or none) and ingests it. The part: the one named in the address
 * or request, else `meta.part`, else, for a samples run, the file name (partSlugFromName). An
 * iterations run keeps all its files on one part and refuses a file for another. The iteration is
 * `meta.iteration`. Every refusal leaves nothing stored (the spooled file is discarded).
 */
export async function ingestRunFile(db: Db, input: RunFileInput): Promise<RunFileResult> {
	const { user: u } = input;
	let handedOver = false;
	try {
		assertCan(u, 'upload');
		const meta = parseFileMeta(input.meta);
		const kind = parseRunKind(input.runKind);
		if (kind && input.runName === null) throw new DomainError('invalid', 'A run kind was sent without a run name: name the run (X-Shellgate-Run or the field "run"). Nothing was stored.');
		const proj = await findProjectForUser(db, u, input.projectSlug);
		let partSlug = input.partSlug ?? (meta?.part ? partSlugFromName(meta.part) : null);
		let r: { run: RunRow; created: boolean } | null = null;
		if (input.runName !== null) {
			r = await findOrCreateRun(db, u, proj.id, input.runName, kind);
			if (r.run.kind === 'samples') partSlug ??= partSlugFromName(input.fileName);
			else {
				if (!partSlug) throw new DomainError('invalid', `The run "${r.run.name}" is a run of iterations: name the one part all its files are revisions of (field or query parameter "part", header X-Shellgate-Part, or "part" in the metadata). Nothing was stored.`);
				const [first] = await db
					.select({ slug: part.slug })
					.from(revision)
					.innerJoin(part, eq(part.id, revision.partId))
					.where(eq(revision.runId, r.run.id))
					.orderBy(asc(revision.id))
					.limit(1);
				if (first && first.slug !== partSlug) throw new DomainError('conflict', `The run "${r.run.name}" holds iterations of the part "${first.slug}", not "${partSlug}". Nothing was stored.`);
			}
		}
		if (!partSlug) throw new DomainError('invalid', `No part name can be made from the file name "${input.fileName.slice(0, 80)}": name the part (field "part" or "part" in the metadata). Nothing was stored.`);
		handedOver = true;
		const res = await ingestRevision(db, {
			user: u,
			projectSlug: proj.slug,
			partSlug,
			partName: input.partName ?? (meta?.part && partSlugFromName(meta.part) === partSlug ? meta.part : undefined),
			fileName: input.fileName,
			spooled: input.spooled,
			source: input.source,
			note: input.note ?? null,
			runId: r?.run.id ?? null,
			iteration: meta?.iteration ?? null,
			meta
		});
		return {
			...res,
			run: r ? { id: r.run.id, name: r.run.name, kind: r.run.kind, created: r.created } : null,
			outcome: res.duplicateOf ? 'duplicate' : res.number === 1 ? 'created-part' : 'new-revision',
			iteration: meta?.iteration ?? null
		};
	} finally {
		if (!handedOver) await discard(input.spooled);
	}
}

export interface RunSummary {
	id: number;
	name: string;
	kind: RunKind;
	project: { id: number; slug: string; name: string; units: string };
	createdBy: string;
	createdAt: string;
	revisions: number;
	parts: number;
	/** Revisions by state (every state listed, 0 where none). */
	states: Record<RevisionState, number>;
	/** Revisions awaiting or under check. */
	pending: number;
	/** Lowest and highest iteration given, null when none. */
	iterations: { min: number; max: number; count: number } | null;
	digestThroughRevisionId: number | null;
	/** The newest check of the run's revisions the last digest covered (a later re-check gets a follow-up digest). */
	digestThroughCheckRunId: number | null;
	links: { self: string; page: string };
}

/** Counts of a run: by state, parts, iterations. Two index-backed aggregate queries on revision_run. */
export async function runSummary(db: Db, row: { run: RunRow; project: { id: number; slug: string; name: string; units: string } }): Promise<RunSummary> {
	const { run: r } = row;
	const byState = await db
		.select({ status: revision.status, n: sql<number>`count(*)` })
		.from(revision)
		.where(eq(revision.runId, r.id))
		.groupBy(revision.status);
	const [agg] = await db
		.select({
			parts: sql<number>`count(distinct ${revision.partId})`,
			itMin: sql<number | null>`min(${revision.iteration})`,
			itMax: sql<number | null>`max(${revision.iteration})`,
			itCount: sql<number>`count(${revision.iteration})`
		})
		.from(revision)
		.where(eq(revision.runId, r.id));
	const states = Object.fromEntries(REVISION_STATES.map((s) => [s, 0])) as Record<RevisionState, number>;
	let total = 0;
	for (const s of byState) {
		states[s.status] = Number(s.n);
		total += Number(s.n);
	}
	return {
		id: r.id,
		name: r.name,
		kind: r.kind,
		project: { id: row.project.id, slug: row.project.slug, name: row.project.name, units: row.project.units },
		createdBy: r.createdBy,
		createdAt: r.createdAt.toISOString(),
		revisions: total,
		parts: Number(agg?.parts ?? 0),
		states,
		pending: states['awaiting-check'] + states.checking,
		iterations: agg && Number(agg.itCount) > 0 ? { min: Number(agg.itMin), max: Number(agg.itMax), count: Number(agg.itCount) } : null,
		digestThroughRevisionId: r.digestThroughRevisionId,
		digestThroughCheckRunId: r.digestThroughCheckRunId,
		links: { self: `/api/v1/runs/${r.id}`, page: `/runs/${r.id}` }
	};
}

/** The runs of a project, newest first, with their revision counts (for the project page). */
export async function projectRuns(db: Db, projectId: number, limit = 20) {
	return db
		.select({
			id: run.id,
			name: run.name,
			kind: run.kind,
			createdAt: run.createdAt,
			revisions: sql<number>`(select count(*) from ${revision} where ${revision.runId} = ${run.id})`
		})
		.from(run)
		.where(eq(run.projectId, projectId))
		.orderBy(sql`${run.id} desc`)
		.limit(limit);
}
