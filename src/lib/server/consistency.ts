// Database against file store: stored_file or revision rows whose bytes are missing, and stored
// bytes no row refers to. Read-only; `npm run consistency` prints the result.
import type { Db } from './db';
import { revision, storedFile } from './db/schema';
import type { FileStore } from './storage';

export interface ConsistencyResult {
	/** sha256 values a stored_file or revision row names whose file the store does not have. */
	missingFiles: string[];
	/** sha256 values of stored files that no stored_file row names. */
	orphanFiles: string[];
	rowsChecked: number;
	filesChecked: number;
}

/**
 * Compares both sides. An upload stores its bytes a moment before its row commits, so a file can be
 * an orphan for that moment on a live system; run it twice before deleting anything.
 */
export async function checkConsistency(db: Db, store: FileStore): Promise<ConsistencyResult> {
	const rows = await db.select({ sha: storedFile.sha256 }).from(storedFile);
	const revRows = await db.selectDistinct({ sha: revision.sha256 }).from(revision);
	const named = new Set<string>();
	for (const r of rows) named.add(r.sha);
	for (const r of revRows) named.add(r.sha);
	const onDisk = new Set<string>();
	for await (const sha of store.list()) onDisk.add(sha);
	const missingFiles = [...named].filter((s) => !onDisk.has(s)).sort();
	const rowShas = new Set(rows.map((r) => r.sha));
	const orphanFiles = [...onDisk].filter((s) => !rowShas.has(s)).sort();
	return { missingFiles, orphanFiles, rowsChecked: named.size, filesChecked: onDisk.size };
}
