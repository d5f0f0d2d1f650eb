// npm run bench:digest: the run digest's tick (every app process runs it every second) on 100,000
// revisions in 500 generator runs, seeded by SQL on a throwaway MariaDB (scripts/bench-db.sh --seed):
// the first digests of every run, the idle tick with nothing due, the candidate query as it was before
// the check-run mark for comparison, the plans of the two loose index scans, and a tick with one
// re-checked run. Revision rows only: no files, no check runs (foreign key checks off for the seeding).
import mysql from 'mysql2/promise';
import { sql } from 'drizzle-orm';
import { getDb } from '../src/lib/server/db';
import { sendRunDigests } from '../src/lib/server/run-digest';

const RUNS = 500, PER = 200, FAMILIES = 100;
const med = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
async function main() {
	const c = await mysql.createConnection({ uri: process.env.DATABASE_URL!, multipleStatements: true });
	const [[p]] = (await c.query("SELECT id FROM project WHERE slug = 'sensor-pods'")) as any;
	const [[u]] = (await c.query("SELECT id FROM user WHERE email = 'designer@example.test'")) as any;
	await c.query('SET FOREIGN_KEY_CHECKS = 0');
	const parts: string[] = [];
	for (let f = 0; f < FAMILIES; f++) for (let k = 0; k < PER; k++) parts.push(`(${p.id}, 'bench-${f}-${k}', 'bench ${f} ${k}')`);
	for (let i = 0; i < parts.length; i += 2000) await c.query(`INSERT INTO part (project_id, slug, name) VALUES ${parts.slice(i, i + 2000).join(',')}`);
	const [[{ first }]] = (await c.query("SELECT MIN(id) AS first FROM part WHERE slug LIKE 'bench-%'")) as any;
	const runs: string[] = [];
	for (let r = 0; r < RUNS; r++) runs.push(`(${p.id}, 'bench run ${r}', 'samples', '${u.id}')`);
	await c.query(`INSERT INTO run (project_id, name, kind, created_by) VALUES ${runs.join(',')}`);
	const [[{ firstRun }]] = (await c.query("SELECT MIN(id) AS firstRun FROM run WHERE name LIKE 'bench run %'")) as any;
	let id = 0;
	const t0 = performance.now();
	for (let r = 0; r < RUNS; r++) {
		const rows: string[] = [];
		for (let k = 0; k < PER; k++) {
			id++;
			const partId = first + (r % FAMILIES) * PER + k;
			rows.push(`(${partId}, ${Math.floor(r / FAMILIES) + 1}, '${String(id).padStart(64, '0')}', 100, 'stl', 'b.stl', '${u.id}', 'api', 'clear', ${firstRun + r}, ${k}, ${1_000_000 + id}, '2026-01-01 00:00:00', '2026-01-01 00:00:00')`);
		}
		await c.query(`INSERT INTO revision (part_id, number, sha256, size, format, file_name, uploader_id, source, status, run_id, iteration, latest_check_id, created_at, updated_at) VALUES ${rows.join(',')}`);
	}
	await c.query("INSERT INTO job (kind, revision_id, status, attempts, max_attempts) SELECT 'check', id, 'done', 1, 3 FROM revision WHERE run_id IS NOT NULL");
	await c.query('ANALYZE TABLE revision, run, job');
	console.log(`seeded ${id} revisions in ${RUNS} runs, ${parts.length} parts, ${(performance.now() - t0).toFixed(0)} ms`);
	const db = getDb();
	// First digests of every run (100 runs a call).
	let t = performance.now(), calls = 0, sent = 0;
	for (let n = await sendRunDigests(db, 0); n > 0; n = await sendRunDigests(db, 0)) { sent += n; calls++; }
	console.log(`first digests: ${sent} runs in ${calls} calls, ${(performance.now() - t).toFixed(0)} ms (${((performance.now() - t) / sent).toFixed(1)} ms a run)`);
	// The idle tick: nothing due.
	const idle: number[] = [];
	for (let k = 0; k < 21; k++) { t = performance.now(); expect0(await sendRunDigests(db, 0)); idle.push(performance.now() - t); }
	console.log(`idle tick (nothing due, 500 digested runs): median ${med(idle).toFixed(1)} ms, max ${Math.max(...idle).toFixed(1)} ms`);
	// The candidate query before this change (revision marks only), for comparison.
	const old: number[] = [];
	for (let k = 0; k < 21; k++) {
		t = performance.now();
		await db.execute(sql`select run.id, run.digest_through_revision_id, max(revision.id) from run inner join revision on (revision.run_id = run.id and revision.id > coalesce(run.digest_through_revision_id, 0)) group by run.id, run.digest_through_revision_id limit 100`);
		old.push(performance.now() - t);
	}
	console.log(`the earlier candidate query alone: median ${med(old).toFixed(1)} ms`);
	for (const q of ['EXPLAIN SELECT run_id, MAX(id) FROM revision WHERE run_id IS NOT NULL GROUP BY run_id', 'EXPLAIN SELECT run_id, MAX(latest_check_id) FROM revision WHERE run_id IS NOT NULL GROUP BY run_id']) {
		const [plan] = (await c.query(q)) as any;
		for (const row of plan) console.log(`${q.slice(8, 40)}: ${row.table} type=${row.type} key=${row.key} rows=${row.rows} ${row.Extra ?? ''}`);
	}
	// A re-check of 200 revisions of one run: newer check ids; the next tick digests that run alone.
	await c.query(`UPDATE revision SET latest_check_id = latest_check_id + 5000000 WHERE run_id = ${firstRun + 7}`);
	t = performance.now();
	const n = await sendRunDigests(db, 0);
	console.log(`tick with one re-checked run of ${PER}: ${n} run digested in ${(performance.now() - t).toFixed(1)} ms`);
	const [[m]] = (await c.query(`SELECT subject FROM mail_outbox ORDER BY id DESC LIMIT 1`)) as any;
	console.log(`its mail: ${m.subject}`);
	await c.end();
	process.exit(0);
}
function expect0(n: number) { if (n !== 0) throw new Error(`expected nothing due, got ${n}`); }
main().catch((e) => { console.error(e); process.exit(1); });
