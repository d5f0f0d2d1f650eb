// Ingest: turning a spooled upload (or a repair's output) into a stored file, a revision and a queued check.
import { and, eq, sql } from 'drizzle-orm';
import { sniffFormat } from '../mesh/read';
import { audit } from './audit';
import { config } from './config';
import type { Db } from './db';
import { part, revision, storedFile, type RevisionState } from './db/schema';
import { enqueueCheck } from './jobs/queue';
import { assertCan, findProjectForUser, HttpError } from './revisions';
import type { SessionUser } from './auth';
import { discard, getStore, type Spooled } from './storage';

const EXT = /\.(stl|ply|obj)$/i;

/** A display-safe file name: no path, no control characters, at most 200 characters. */
export function cleanFileName(raw: string): string {
	const base = raw.replace(/\\/g, '/').split('/').pop() ?? '';
	const cleaned = base
		.replace(/[\u0000-\u001f\u007f]/g, '')
		.replace(/^\.+/, '')
		.trim()
		.slice(-200);
	return cleaned || 'mesh';
}

/** Checks the name and the first bytes look like a mesh file before anything is stored. */
export function checkUploadKind(fileName: string, head: Uint8Array): string {
	const m = EXT.exec(fileName);
	if (!m) throw new HttpError(400, `"${fileName}" is not a mesh file: Shellgate accepts .stl, .ply and .obj.`);
	const ext = m[1].toLowerCase();
	const text = new TextDecoder('latin1').decode(head.subarray(0, 256)).trimStart().toLowerCase();
	if (/^(<!doctype|<html|<script|<\?xml|<svg)/.test(text)) throw new HttpError(400, `"${fileName}" holds HTML or XML, not a mesh.`);
	if (head[0] === 0x50 && head[1] === 0x4b && head[2] === 0x03 && head[3] === 0x04) throw new HttpError(400, `"${fileName}" is a zip archive; upload the mesh file itself.`);
	if (head[0] === 0x1f && head[1] === 0x8b) throw new HttpError(400, `"${fileName}" is gzip-compressed; upload the uncompressed mesh file.`);
	if (ext === 'ply' && !text.startsWith('ply')) throw new HttpError(400, `"${fileName}" does not start with the PLY header line "ply".`);
	return ext;
}

export interface IngestInput {
	user: SessionUser;
	projectSlug: string;
	partSlug: string;
	partName?: string;
	fileName: string;
	spooled: Spooled;
	source: 'upload' | 'api' | 'repair';
	parentRevisionId?: number | null;
	recipe?: unknown;
	repairLog?: unknown;
	note?: string | null;
}

export interface IngestResult {
	revisionId: number;
	number: number;
	status: RevisionState;
	duplicateOf: number | null;
	projectSlug: string;
	partSlug: string;
}

const SLUG = /^[a-z0-9][a-z0-9-]{0,63}$/;

/**
 * Turns a spooled upload into a revision and a queued check. The bytes go to the store first (they
 * are content-addressed, so a retry is harmless); then one transaction writes the file row, the
 * revision, the job and the audit row. If that transaction fails, bytes no row refers to are removed.
 */
export async function ingestRevision(db: Db, input: IngestInput): Promise<IngestResult> {
	const { user: u, spooled } = input;
	try {
		assertCan(u, input.source === 'repair' ? 'repair' : 'upload');
		const fileName = cleanFileName(input.fileName);
		const ext = checkUploadKind(fileName, spooled.head);
		if (spooled.size === 0) throw new HttpError(400, `"${fileName}" is empty.`);
		const sniffed = sniffFormat(spooled.head);
		if (sniffed && sniffed !== ext && !(ext === 'stl' && sniffed === null)) {
			throw new HttpError(400, `"${fileName}" is named .${ext} but its content looks like ${sniffed.toUpperCase()}.`);
		}
		if (!SLUG.test(input.partSlug)) throw new HttpError(400, 'A part name in the address may use lower-case letters, digits and dashes (at most 64).');
		const proj = await findProjectForUser(db, u, input.projectSlug);
		const store = getStore();
		try {
			await store.putFile(spooled.tmpPath, spooled.sha256, spooled.size);
		} catch (e) {
			// Nothing refers to the bytes yet; a half-written object is removed so no row can point at it.
			await store.delete(spooled.sha256).catch(() => {});
			console.error('[shellgate] file store write failed:', (e as Error)?.message ?? e);
			throw new HttpError(503, 'The file store did not accept the file right now. Nothing was saved; try the upload again in a moment.');
		}
		try {
			return await db.transaction(async (txx) => {
				const tx = txx as unknown as Db;
				let [pa] = await tx.select().from(part).where(and(eq(part.projectId, proj.id), eq(part.slug, input.partSlug))).limit(1).for('update');
				if (!pa) {
					const name = (input.partName?.trim() || input.partSlug.replace(/-/g, ' ')).slice(0, 120);
					const [r] = await tx.insert(part).values({ projectId: proj.id, slug: input.partSlug, name }).$returningId();
					[pa] = await tx.select().from(part).where(eq(part.id, r.id)).limit(1);
					await audit(tx, u.id, 'part', pa.id, 'created');
				}
				const [dup] = await tx
					.select({ id: revision.id, number: revision.number, status: revision.status })
					.from(revision)
					.where(and(eq(revision.partId, pa.id), eq(revision.sha256, spooled.sha256)))
					.limit(1);
				if (dup) return { revisionId: dup.id, number: dup.number, status: dup.status, duplicateOf: dup.id, projectSlug: proj.slug, partSlug: pa.slug };
				await tx
					.insert(storedFile)
					.values({ sha256: spooled.sha256, size: spooled.size, backend: store.backend })
					.onDuplicateKeyUpdate({ set: { sha256: sql`sha256` } });
				const [{ next }] = await tx.select({ next: sql<number>`coalesce(max(${revision.number}), 0) + 1` }).from(revision).where(eq(revision.partId, pa.id));
				const [r] = await tx
					.insert(revision)
					.values({
						partId: pa.id,
						number: Number(next),
						sha256: spooled.sha256,
						size: spooled.size,
						format: ext,
						fileName,
						uploaderId: u.id,
						source: input.source,
						parentRevisionId: input.parentRevisionId ?? null,
						recipe: input.recipe ?? null,
						repairLog: input.repairLog ?? null,
						note: input.note?.slice(0, 500) ?? null
					})
					.$returningId();
				await enqueueCheck(tx, r.id, config.checkAttempts);
				await audit(tx, u.id, 'revision', r.id, input.source === 'repair' ? 'repair-created' : 'uploaded', null, 'awaiting-check', { sha256: spooled.sha256, size: spooled.size, parent: input.parentRevisionId ?? null });
				return { revisionId: r.id, number: Number(next), status: 'awaiting-check' as const, duplicateOf: null, projectSlug: proj.slug, partSlug: pa.slug };
			});
		} catch (e) {
			const [ref] = await db.select({ s: storedFile.sha256 }).from(storedFile).where(eq(storedFile.sha256, spooled.sha256)).limit(1).catch(() => [{ s: 'unknown' }]);
			if (!ref) await store.delete(spooled.sha256).catch(() => {});
			throw e;
		}
	} finally {
		await discard(spooled);
	}
}
