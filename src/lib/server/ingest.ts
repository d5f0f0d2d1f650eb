// Ingest: turning a spooled upload (or a repair's output) into a stored file, a revision and a queued check.
import { and, eq, sql } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/mysql2';
import { sniffFormat } from '../mesh/read';
import { audit } from './audit';
import { config } from './config';
import type { Db } from './db';
import * as schema from './db/schema';
import { part, revision, storedFile, type RevisionState } from './db/schema';
import { enqueueCheck } from './jobs/queue';
import { jobsQueued } from './jobs/wake';
import { queueChanged } from './queue-view';
import { storedMeasures } from './repair-limits';
import { assertCan, findProjectForUser } from './revisions';
import { DomainError } from '../domain-error';
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
	if (!m) throw new DomainError('invalid', `"${fileName}" is not a mesh file: Shellgate accepts .stl, .ply and .obj.`);
	const ext = m[1].toLowerCase();
	const text = new TextDecoder('latin1').decode(head.subarray(0, 256)).trimStart().toLowerCase();
	if (/^(<!doctype|<html|<script|<\?xml|<svg)/.test(text)) throw new DomainError('invalid', `"${fileName}" holds HTML or XML, not a mesh.`);
	if (head[0] === 0x50 && head[1] === 0x4b && head[2] === 0x03 && head[3] === 0x04) throw new DomainError('invalid', `"${fileName}" is a zip archive; upload the mesh file itself.`);
	if (head[0] === 0x1f && head[1] === 0x8b) throw new DomainError('invalid', `"${fileName}" is gzip-compressed; upload the uncompressed mesh file.`);
	if (ext === 'ply' && !text.startsWith('ply')) throw new DomainError('invalid', `"${fileName}" does not start with the PLY header line "ply".`);
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
	/** The generator run the file belongs to (runs.ts finds or creates it), its iteration there and the generator's metadata. */
	runId?: number | null;
	iteration?: number | null;
	meta?: unknown;
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

/** MariaDB's answers when two transactions collided: deadlock (1213) or lock wait timeout (1205). */
function isLockCollision(e: unknown): boolean {
	for (let c = e as { errno?: number; cause?: unknown } | undefined, i = 0; c && i < 4; c = c.cause as typeof c, i++) {
		if (c.errno === 1213 || c.errno === 1205) return true;
	}
	return false;
}

const TX_ATTEMPTS = 5;

type Conn = { query(sql: string, values?: unknown[]): Promise<[unknown, unknown]>; release?: () => void };

/**
 * One connection for the whole ingest, so the per-file lock (GET_LOCK belongs to a connection) is
 * held from the store write through the commit and the clean-up, and an ingest never needs two
 * connections from the pool at once.
 */
async function withConnection<T>(db: Db, fn: (conn: Conn, cdb: Db) => Promise<T>): Promise<T> {
	const client = (db as unknown as { $client?: { getConnection?: () => Promise<Conn> } & Conn }).$client;
	// A transaction handle has no client of its own; an ingest runs its own transaction.
	if (!client) throw new Error('ingestRevision takes the database handle, not a transaction');
	if (typeof client.getConnection !== 'function') return fn(client, db);
	const conn = await client.getConnection();
	try {
		return await fn(conn, drizzle(conn as never, { schema, mode: 'default' }) as unknown as Db);
	} finally {
		conn.release?.();
	}
}

/**
 * Turns a spooled upload into a revision and a queued check. The part is created on first use by an
 * idempotent insert of its own, so concurrent first uploads to new parts never deadlock on the slug
 * index; the transaction then locks the part row, which keeps revision numbers dense. While the bytes
 * are written, the rows committed and any clean-up done, the connection holds a named lock for the
 * file's sha256, so a failed request can only remove bytes no row refers to and no other request is
 * about to claim.
 */
export async function ingestRevision(db: Db, input: IngestInput): Promise<IngestResult> {
	const { user: u, spooled } = input;
	try {
		assertCan(u, input.source === 'repair' ? 'repair' : 'upload');
		const fileName = cleanFileName(input.fileName);
		const ext = checkUploadKind(fileName, spooled.head);
		if (spooled.size === 0) throw new DomainError('invalid', `"${fileName}" is empty.`);
		const sniffed = sniffFormat(spooled.head);
		if (sniffed && sniffed !== ext && !(ext === 'stl' && sniffed === null)) {
			throw new DomainError('invalid', `"${fileName}" is named .${ext} but its content looks like ${sniffed.toUpperCase()}.`);
		}
		if (!SLUG.test(input.partSlug)) throw new DomainError('invalid', 'A part name in the address may use lower-case letters, digits and dashes (at most 64).');
		const proj = await findProjectForUser(db, u, input.projectSlug);
		return await withConnection(db, async (conn, cdb) => {
			const lockName = `sg-file-${spooled.sha256}`;
			const [rows] = (await conn.query('SELECT GET_LOCK(?, 60) AS got', [lockName])) as [Array<{ got: number | null }>, unknown];
			if (rows[0]?.got !== 1) throw new DomainError('unavailable', 'The server is busy with this same file right now. Nothing was saved; try the upload again in a moment.');
			try {
				const res = await ingestLocked(cdb, input, proj, fileName, ext);
				queueChanged();
				// The check job is committed: this process's check loops start on it now.
				if (res.duplicateOf === null) jobsQueued();
				return res;
			} finally {
				await conn.query('SELECT RELEASE_LOCK(?)', [lockName]).catch(() => {});
			}
		});
	} finally {
		await discard(spooled);
	}
}

async function ingestLocked(db: Db, input: IngestInput, proj: { id: number; slug: string }, fileName: string, ext: string): Promise<IngestResult> {
	const { user: u, spooled } = input;
	const store = getStore();
	try {
		await store.putFile(spooled.tmpPath, spooled.sha256, spooled.size);
	} catch (e) {
		// Under the file lock: only bytes no committed row refers to are removed.
		await removeIfUnreferenced(db, spooled.sha256);
		console.error('[shellgate] file store write failed:', (e as Error)?.message ?? e);
		throw new DomainError('unavailable', 'The file store did not accept the file right now. Nothing was saved; try the upload again in a moment.');
	}
	try {
		// The part on first use: its own short statement, harmless when another request got there first.
		const name = (input.partName?.trim() || input.partSlug.replace(/-/g, ' ')).slice(0, 120);
		// INSERT IGNORE: with found rows reported, ON DUPLICATE KEY UPDATE counts an unchanged duplicate as affected.
		const [ins] = (await db.insert(part).ignore().values({ projectId: proj.id, slug: input.partSlug, name })) as unknown as [{ affectedRows: number; insertId: number }];
		const [pa] = await db.select().from(part).where(and(eq(part.projectId, proj.id), eq(part.slug, input.partSlug))).limit(1);
		if (ins.affectedRows === 1) await audit(db, u.id, 'part', pa.id, 'created');
		for (let attempt = 1; ; attempt++) {
			try {
				return await db.transaction(async (txx) => {
					const tx = txx as unknown as Db;
					// Every ingest into this part queues here, so max(number) + 1 is never taken twice.
					await tx.select({ id: part.id }).from(part).where(eq(part.id, pa.id)).for('update');
					const [dup] = await tx
						.select({ id: revision.id, number: revision.number, status: revision.status })
						.from(revision)
						.where(and(eq(revision.partId, pa.id), eq(revision.sha256, spooled.sha256)))
						.limit(1);
					// The bytes were just (re)written above, so a duplicate always points at a readable file.
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
							note: input.note?.slice(0, 500) ?? null,
							runId: input.runId ?? null,
							iteration: input.iteration ?? null,
							meta: input.meta ?? null,
							// The queue's deviation column: the repair's measured move, out of its log.
							deviation: storedMeasures({ source: input.source, repairLog: input.repairLog ?? null })?.deviation ?? null
						})
						.$returningId();
					// The part row is locked above, so the newest number is also the newest revision here.
					await tx.update(part).set({ latestRevisionId: r.id, latestStatus: 'awaiting-check' }).where(eq(part.id, pa.id));
					await enqueueCheck(tx, r.id, config.checkAttempts);
					await audit(tx, u.id, 'revision', r.id, input.source === 'repair' ? 'repair-created' : 'uploaded', null, 'awaiting-check', { sha256: spooled.sha256, size: spooled.size, parent: input.parentRevisionId ?? null });
					return { revisionId: r.id, number: Number(next), status: 'awaiting-check' as const, duplicateOf: null, projectSlug: proj.slug, partSlug: pa.slug };
				});
			} catch (e) {
				if (attempt < TX_ATTEMPTS && isLockCollision(e)) {
					await new Promise((r) => setTimeout(r, 10 * attempt + Math.random() * 20 * attempt));
					continue;
				}
				throw e;
			}
		}
	} catch (e) {
		await removeIfUnreferenced(db, spooled.sha256);
		throw e;
	}
}

/** Removes stored bytes no row refers to. Call only while holding the file's lock. */
async function removeIfUnreferenced(db: Db, sha256: string): Promise<void> {
	try {
		const [ref] = await db.select({ s: storedFile.sha256 }).from(storedFile).where(eq(storedFile.sha256, sha256)).limit(1);
		if (!ref) await getStore().delete(sha256);
	} catch {
		// Unsure whether a row refers to the bytes: keep them.
	}
}
