// Measures what the run page costs with 1,000 checked revisions in one run: the summary, the pass
// rates and the one-row-per-revision query (narrow columns plus JSON_VALUE out of every report),
// and the in-memory charts and table. The revisions are ingested for real; their check results are
// written by the check job's own writer from one real report of a 20 k-triangle mesh (varied per
// revision), so the reports in the database have their real size. Needs DATABASE_URL (a throwaway
// database; scripts/bench-db.sh starts one).
import { Readable } from 'node:stream';
import { eq } from 'drizzle-orm';
import { getDb, closeDb } from '../src/lib/server/db';
import { checkRun, revision } from '../src/lib/server/db/schema';
import { loadCheckSetup, writeCheckResult } from '../src/lib/server/jobs/check';
import { claimJob } from '../src/lib/server/jobs/queue';
import { ingestRunFile, loadRunForUser, runSummary } from '../src/lib/server/runs';
import { parseRunFilter, rulePassRates, runRows, runView } from '../src/lib/server/run-view';
import { spool } from '../src/lib/server/storage';
import { seededUsers } from '../src/lib/server/testing/fixtures';
import { inspectBytes } from '../src/lib/mesh/inspect';
import { readMesh } from '../src/lib/mesh/read';
import { DEFAULT_DISTANCE_SAMPLES, shapeDistance } from '../src/lib/mesh/shape-distance';
import { torus } from '../src/lib/mesh/testing/test-meshes';
import { writeBinaryStl } from '../src/lib/mesh/write';
import type { InspectionReport } from '../src/lib/mesh/report';

const N = Number(process.env.BENCH_RUN_FILES ?? 1000);

async function main() {
	const db = getDb();
	const users = await seededUsers(db);
	const mesh = torus(200, 50, 0.2, 0.07); // 20,000 triangles
	const stl = writeBinaryStl(mesh);
	const base = inspectBytes(stl, 'bulb.stl', { cellSize: 0.005, flowDirection: [1, 0, 0] });
	console.log(`report of a ${mesh.indices.length / 3}-triangle mesh: ${JSON.stringify(base).length.toLocaleString('en-US')} characters of JSON`);
	// What the check of an iteration adds: reading the previous iteration too and the shape distance.
	for (const [n, m] of [[200, 50], [1000, 500]] as const) {
		const a = writeBinaryStl(torus(n, m, 0.2, 0.07)), b = writeBinaryStl(torus(n, m, 0.2, 0.071));
		const ms: number[] = [];
		for (let k = 0; k < 3; k++) {
			const t = performance.now();
			shapeDistance(readMesh(a, 'a.stl'), readMesh(b, 'b.stl'));
			ms.push(performance.now() - t);
		}
		console.log(`shape distance at ${(2 * n * m).toLocaleString('en-US')} triangles (both read, ${DEFAULT_DISTANCE_SAMPLES} samples a side): ${Math.min(...ms).toFixed(0)} ms`);
	}
	const t0 = performance.now();
	let runId = 0;
	for (let i = 0; i < N; i++) {
		// Distinct bytes per file: the STL header differs.
		const bytes = writeBinaryStl({ positions: mesh.positions.subarray(0, 9), indices: new Uint32Array([0, 1, 2]) }, `file ${i}`);
		const spooled = await spool(Readable.from([Buffer.from(bytes)]), 1 << 30);
		const r = await ingestRunFile(db, { user: users.designer, projectSlug: 'keel-bulbs', runName: 'bench run', runKind: 'samples', partSlug: null, fileName: `bulb-${i}.stl`, spooled, meta: JSON.stringify({ iteration: i }), source: 'api' });
		runId = r.run!.id;
	}
	const t1 = performance.now();
	for (let j = await claimJob(db, 'bench'), i = 0; j; j = await claimJob(db, 'bench'), i++) {
		const setup = (await loadCheckSetup(db, j.revisionId))!;
		const report: InspectionReport = { ...base, volume: (base.volume ?? 0) * (1 + i / N), wettedArea: (base.wettedArea ?? 0) * (1 + i / (2 * N)), genus: i % 97 === 0 ? 2 : 1 };
		await writeCheckResult(db, j, 'bench', setup, report);
	}
	const t2 = performance.now();
	const [{ n }] = await db.select({ n: checkRun.id }).from(checkRun).innerJoin(revision, eq(revision.latestCheckId, checkRun.id)).where(eq(revision.runId, runId)).limit(1).then(async () => [{ n: (await db.select().from(revision).where(eq(revision.runId, runId))).length }]);
	console.log(`seeded ${n} revisions in one run: ingest ${(t1 - t0).toFixed(0)} ms, check results ${(t2 - t1).toFixed(0)} ms`);

	const times: Record<string, number[]> = { summary: [], passRates: [], rows: [], view: [], total: [] };
	for (let k = 0; k < 7; k++) {
		const a = performance.now();
		const row = await loadRunForUser(db, users.engineer, runId);
		await runSummary(db, row);
		const b = performance.now();
		await rulePassRates(db, runId);
		const c = performance.now();
		const rows = await runRows(db, runId);
		const d = performance.now();
		runView(rows, parseRunFilter(new URLSearchParams('genus=2')), 1);
		const e = performance.now();
		times.summary.push(b - a);
		times.passRates.push(c - b);
		times.rows.push(d - c);
		times.view.push(e - d);
		times.total.push(e - a);
	}
	const med = (xs: number[]) => [...xs].sort((x, y) => x - y)[Math.floor(xs.length / 2)];
	console.log(`run page data, ${N} revisions, median of 7 (ms): ` + Object.entries(times).map(([k, v]) => `${k} ${med(v).toFixed(1)}`).join(', '));
	await closeDb();
}

main().catch(async (e) => {
	console.error(e);
	await closeDb();
	process.exit(1);
});
