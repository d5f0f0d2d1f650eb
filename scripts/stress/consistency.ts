// `npm run consistency`: lists database rows whose stored file is missing and stored files no row
// refers to, for the configured store (STORAGE, SHELLGATE_DATA_DIR, S3_*) and DATABASE_URL.
// Exit 0 when both lists are empty, 1 when not, 2 when the check could not run.
import { checkConsistency } from '../../src/lib/server/consistency';
import { closeDb, getDb } from '../../src/lib/server/db';
import { getStore } from '../../src/lib/server/storage';

try {
	const store = getStore();
	const r = await checkConsistency(getDb(), store);
	console.log(`[consistency] ${store.backend} store: ${r.rowsChecked} file(s) named by rows, ${r.filesChecked} file(s) stored`);
	for (const s of r.missingFiles) console.log(`missing file  ${s}  (a row names it, the store has no such file)`);
	for (const s of r.orphanFiles) console.log(`orphan file   ${s}  (stored, no stored_file row names it)`);
	console.log(`[consistency] ${r.missingFiles.length} missing, ${r.orphanFiles.length} orphan`);
	process.exitCode = r.missingFiles.length || r.orphanFiles.length ? 1 : 0;
} catch (e) {
	console.error(`[consistency] could not run: ${(e as Error).message}`);
	process.exitCode = 2;
} finally {
	await closeDb();
}
