// Grows a migrated, demo-seeded database (scripts/migrate.ts, scripts/seed.ts) into a benchmark one
// for the queue at scale: BENCH_REVISIONS (100,000) revisions in BENCH_RUNS (500) generator runs over
// about BENCH_PARTS (18,000) parts of three bench projects of the demo team, with a state mix like a
// team's after months of runs, one check run each for every revision that was checked (with a real
// report of a ~20 k-triangle mesh, its rule results and its check job), decisions for the decided
// ones and repair revisions with their measured deviation. Not demo data: no mesh files are stored
// (the viewer and downloads of these revisions answer "not found").
//
//   DATABASE_URL=… npx tsx scripts/seed-bench.ts       (refuses a database already grown)
//
// Small rows (runs, parts, revisions, stored-file rows) go in multi-row INSERTs of 2,000; the
// heavy ones (check runs with their reports, rule results, jobs, decisions) by INSERT … SELECT in
// MariaDB from a few template reports, so the reports never cross the connection more than once.
import { createHash } from 'node:crypto';
import mysql from 'mysql2/promise';
import { DEFAULT_GATE_RULES } from '../src/lib/gate/profile';
import { blockingFailures, evaluateGate, severityScore } from '../src/lib/gate/rules';
import { keelBulb, towBody } from '../src/lib/mesh/testing/implicit-shapes';
import { inspectBytes } from '../src/lib/mesh/inspect';
import { gridFor, marchingCubes } from '../src/lib/mesh/testing/marching-cubes';
import type { MeshBuffers } from '../src/lib/mesh/types';
import { writeBinaryStl } from '../src/lib/mesh/write';

const REVISIONS = Number(process.env.BENCH_REVISIONS ?? 100_000);
const RUNS = Number(process.env.BENCH_RUNS ?? 500);
const PARTS = Number(process.env.BENCH_PARTS ?? 18_000);
const BATCH = 2000;
const PER_RUN = Math.round(REVISIONS / RUNS); // files per run = parts per family
const FAMILIES = Math.max(1, Math.round(PARTS / PER_RUN));
const CELL = 0.02; // model units; the bench projects are in metres

const say = (s: string) => console.log(`[seed-bench] ${s}`);
const sha = (s: string) => createHash('sha256').update(s).digest('hex');
/** A fixed scatter of ids over 0..99 (Knuth's multiplicative hash), so the state mix is the same on every run. */
const bucket = (id: number) => Number((BigInt(id) * 2654435761n) % 4294967296n) % 100;

type State = 'awaiting-check' | 'checking' | 'unreadable' | 'check-incomplete' | 'held' | 'clear' | 'repair-proposed' | 'returned' | 'signed-off';
/** Cumulative percentages: the newest revision of a part, and the ones a later run superseded. */
const LATEST_MIX: [number, State][] = [[2, 'awaiting-check'], [3, 'checking'], [5, 'unreadable'], [7, 'check-incomplete'], [32, 'held'], [52, 'clear'], [60, 'repair-proposed'], [70, 'returned'], [100, 'signed-off']];
const OLDER_MIX: [number, State][] = [[1, 'unreadable'], [2, 'check-incomplete'], [37, 'held'], [57, 'clear'], [60, 'repair-proposed'], [85, 'returned'], [100, 'signed-off']];
const stateOf = (mix: [number, State][], b: number) => mix.find(([p]) => b < p)![1];
const CHECKED = (s: State) => !['awaiting-check', 'checking', 'unreadable', 'check-incomplete'].includes(s);

function withoutEveryNth(m: MeshBuffers, n: number): MeshBuffers {
	const idx: number[] = [];
	for (let f = 0; f < m.indices.length / 3; f++) if (f % n !== 7) idx.push(m.indices[3 * f], m.indices[3 * f + 1], m.indices[3 * f + 2]);
	return { positions: m.positions, indices: Uint32Array.from(idx) };
}
function withShiftedCopy(m: MeshBuffers, dx: number): MeshBuffers {
	const nv = m.positions.length / 3;
	const pos = new Float64Array(m.positions.length * 2);
	pos.set(m.positions);
	for (let i = 0; i < nv; i++) pos.set([m.positions[3 * i] + dx, m.positions[3 * i + 1], m.positions[3 * i + 2]], m.positions.length + 3 * i);
	const idx = new Uint32Array(m.indices.length * 2);
	idx.set(m.indices);
	for (let i = 0; i < m.indices.length; i++) idx[m.indices.length + i] = m.indices[i] + nv;
	return { positions: pos, indices: idx };
}

/** Four real reports: two that pass, one open surface, one with two overlapping shells. */
function templates() {
	const tow = towBody(1), keel = keelBulb(2);
	const towMesh = marchingCubes(tow.field, gridFor(tow.min, tow.max, 0.045));
	const keelMesh = marchingCubes(keel.field, gridFor(keel.min, keel.max, 0.04));
	const meshes: [string, MeshBuffers][] = [
		['tow-body.stl', towMesh],
		['keel-bulb.stl', keelMesh],
		['tow-body-open.stl', withoutEveryNth(towMesh, 40)],
		['tow-body-doubled.stl', withShiftedCopy(towMesh, 0.3)]
	];
	return meshes.map(([name, m], tpl) => {
		const report = inspectBytes(writeBinaryStl(m), name, { cellSize: CELL });
		const outcomes = evaluateGate(report, DEFAULT_GATE_RULES, { units: 'm', targetCellSize: CELL });
		const failed = blockingFailures(outcomes);
		const json = JSON.stringify(report);
		return {
			tpl,
			name,
			report,
			json,
			outcomes,
			failedRules: failed.length ? `,${failed.map((o) => o.rule).join(',')},` : '',
			severity: severityScore(outcomes)
		};
	});
}

async function insertRows(c: mysql.Connection, table: string, cols: string[], rows: unknown[][]) {
	for (let i = 0; i < rows.length; i += BATCH) {
		const chunk = rows.slice(i, i + BATCH);
		await c.query(`INSERT INTO \`${table}\` (${cols.map((x) => `\`${x}\``).join(', ')}) VALUES ?`, [chunk]);
	}
}

async function main() {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set.');
	const c = await mysql.createConnection({ uri: url, multipleStatements: false });
	const t0 = performance.now();
	const [[admin]] = (await c.query("SELECT u.id, u.team_id FROM user u WHERE u.email = 'admin@example.test'")) as unknown as [{ id: string; team_id: number }[]];
	if (!admin) throw new Error('No demo team: run scripts/migrate.ts and scripts/seed.ts first.');
	const people = Object.fromEntries(((await c.query("SELECT email, id FROM user WHERE email IN ('designer@example.test', 'engineer@example.test', 'reviewer@example.test')")) as unknown as [{ email: string; id: string }[]])[0].map((r) => [r.email.split('@')[0], r.id]));
	const [[done]] = (await c.query("SELECT COUNT(*) AS n FROM project WHERE slug LIKE 'bench-%'")) as unknown as [{ n: number }[]];
	if (Number(done.n) > 0) {
		say('this database already holds the bench projects; nothing to do (use a fresh database to grow it again).');
		await c.end();
		return;
	}

	const tpls = templates();
	for (const t of tpls) say(`template ${t.name}: ${t.report.faces.toLocaleString('en')} faces, report ${(t.json.length / 1024).toFixed(1)} KB, failed ${t.failedRules || 'none'}, severity ${t.severity}`);
	const tMeshes = performance.now();
	const passing = tpls.filter((t) => !t.failedRules).map((t) => t.tpl);
	const failing = tpls.filter((t) => t.failedRules).map((t) => t.tpl);
	if (!passing.length || !failing.length) throw new Error('the template meshes did not give both passing and failing reports');

	await c.query('SET SESSION foreign_key_checks = 0, unique_checks = 0');
	await c.beginTransaction();
	// Projects, each with its gate profile v1.
	const projects: { id: number; profile: number }[] = [];
	for (const [slug, name] of [['bench-tow-family', 'Bench: tow-body families'], ['bench-keel-family', 'Bench: keel-bulb families'], ['bench-pod-family', 'Bench: sensor-pod families']]) {
		const [r] = (await c.query('INSERT INTO project (team_id, slug, name, description, units, flow_x, flow_y, flow_z, target_cell_size) VALUES (?, ?, ?, ?, ?, 1, 0, 0, ?)', [admin.team_id, slug, name, 'Grown by scripts/seed-bench.ts for the queue benchmark.', 'm', CELL])) as unknown as [{ insertId: number }];
		const [g] = (await c.query('INSERT INTO gate_profile (project_id, version, rules, created_by) VALUES (?, 1, ?, ?)', [r.insertId, JSON.stringify(DEFAULT_GATE_RULES), admin.id])) as unknown as [{ insertId: number }];
		projects.push({ id: r.insertId, profile: g.insertId });
	}
	const next = async (table: string) => Number(((await c.query(`SELECT COALESCE(MAX(id), 0) + 1 AS n FROM \`${table}\``)) as unknown as [{ n: number }[]])[0][0].n);
	const [runStart, partStart, revStart, crStart] = [await next('run'), await next('part'), await next('revision'), await next('check_run')];

	// Family f: parts partStart + f·PER_RUN + k (k < PER_RUN) in project f mod 3; run r is generation
	// floor(r / FAMILIES) of family r mod FAMILIES and brings one new revision of each of its parts.
	const gens = (f: number) => Math.floor(RUNS / FAMILIES) + (f < RUNS % FAMILIES ? 1 : 0);
	const now = Date.now();
	const runAt = (r: number) => now - (RUNS - r) * 6 * 3600_000;
	/** Revision id, whether it is its part's newest, and its state, for file k of run r. */
	const revOf = (r: number, k: number) => {
		const f = r % FAMILIES, gen = Math.floor(r / FAMILIES);
		const id = revStart + r * PER_RUN + k;
		const latest = gen === gens(f) - 1;
		let state = stateOf(latest ? LATEST_MIX : OLDER_MIX, bucket(id));
		// A repair needs an original: the part's revision of the run before.
		if (state === 'repair-proposed' && gen === 0) state = 'clear';
		return { id, f, gen, latest, state };
	};
	const runs: unknown[][] = [];
	for (let r = 0; r < RUNS; r++) runs.push([runStart + r, projects[(r % FAMILIES) % 3].id, `family-${String(r % FAMILIES).padStart(2, '0')}-gen-${Math.floor(r / FAMILIES) + 1}`, 'samples', people.designer, new Date(runAt(r))]);
	await insertRows(c, 'run', ['id', 'project_id', 'name', 'kind', 'created_by', 'created_at'], runs);

	const parts: unknown[][] = [];
	for (let f = 0; f < FAMILIES; f++) {
		for (let k = 0; k < PER_RUN; k++) {
			const last = gens(f) - 1;
			const latestRun = last * FAMILIES + f;
			const newest = revOf(latestRun, k);
			parts.push([partStart + f * PER_RUN + k, projects[f % 3].id, `family-${String(f).padStart(2, '0')}-s${String(k).padStart(3, '0')}`, `Family ${f} sample ${k}`, newest.id, newest.state, new Date(runAt(0))]);
		}
	}
	await insertRows(c, 'part', ['id', 'project_id', 'slug', 'name', 'latest_revision_id', 'latest_status', 'created_at'], parts);

	const revs: unknown[][] = [];
	const files: unknown[][] = [];
	const tplOf: unknown[][] = [];
	const counts: Record<string, number> = {};
	for (let r = 0; r < RUNS; r++) {
		for (let k = 0; k < PER_RUN; k++) {
			const { id, f, gen, state } = revOf(r, k);
			const b = bucket(id);
			counts[state] = (counts[state] ?? 0) + 1;
			const repair = state === 'repair-proposed';
			const tpl = state === 'held' || state === 'returned' ? failing[b % failing.length] : passing[b % passing.length];
			const checked = CHECKED(state);
			const fileSha = sha(`bench ${id}`);
			const size = 780_000 + ((b * 7919) % 400_000);
			const deviation = repair ? (0.02 + (b % 37) / 37) * CELL * 0.5 : null;
			const t = tpls[tpl];
			const repairLog = repair ? JSON.stringify({ log: [], measures: { facesBefore: t.report.faces + 40, facesAfter: t.report.faces, areaBefore: t.report.area * 1.001, areaAfter: t.report.area, volumeBefore: t.report.volume, volumeAfter: t.report.volume, deviation } }) : null;
			const needsAction = !['returned', 'signed-off'].includes(state);
			revs.push([
				id,
				partStart + f * PER_RUN + k,
				gen + 1,
				fileSha,
				size,
				'stl-binary',
				`family-${f}-s${k}-gen${gen + 1}.stl`,
				repair ? people.engineer : people.designer,
				repair ? 'repair' : 'api',
				repair ? id - FAMILIES * PER_RUN : null,
				repairLog,
				runStart + r,
				gen + 1,
				JSON.stringify({ family: f, sample: k, params: { length: 1 + (k % 17) / 10, finRatio: (b % 13) / 13 } }),
				deviation,
				state,
				state === 'held' ? 'Closed surface; Self-intersections' : state === 'unreadable' ? 'The file ends before its last triangle.' : state === 'check-incomplete' ? 'The check ran out of time.' : null,
				needsAction && b % 10 < 3 ? people.engineer : null,
				checked ? crStart + (id - revStart) : null,
				new Date(runAt(r) + k * 1000),
				new Date(runAt(r) + k * 1000 + 60_000)
			]);
			files.push([fileSha, size, 'local', new Date(runAt(r))]);
			if (checked) tplOf.push([id, tpl]);
		}
	}
	await insertRows(c, 'stored_file', ['sha256', 'size', 'backend', 'created_at'], files);
	await insertRows(
		c,
		'revision',
		['id', 'part_id', 'number', 'sha256', 'size', 'format', 'file_name', 'uploader_id', 'source', 'parent_revision_id', 'repair_log', 'run_id', 'iteration', 'meta', 'deviation', 'status', 'status_reason', 'assignee_id', 'latest_check_id', 'created_at', 'updated_at'],
		revs
	);
	const tSmall = performance.now();

	// The heavy rows, in MariaDB: check runs from the templates, their rule results, jobs, decisions.
	await c.query('CREATE TEMPORARY TABLE bench_tpl (tpl INT PRIMARY KEY, report LONGTEXT, report_sha256 VARCHAR(64), engine_version VARCHAR(32), faces INT, vertices INT, shells INT, boundary_edges INT, non_manifold_edges INT, self_intersecting_pairs INT, genus INT, volume DOUBLE, watertight BOOLEAN, severity INT, failed_rules VARCHAR(300), wall DOUBLE, gap DOUBLE, duration_ms INT)');
	await c.query('CREATE TEMPORARY TABLE bench_rule (tpl INT, ord INT, rule VARCHAR(40), passed BOOLEAN, severity VARCHAR(16), measured VARCHAR(120), limit_text VARCHAR(120), explanation TEXT, location JSON)');
	await c.query('CREATE TEMPORARY TABLE bench_rev_tpl (revision_id INT PRIMARY KEY, tpl INT)');
	for (const t of tpls) {
		const r = t.report;
		await c.query('INSERT INTO bench_tpl VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)', [
			t.tpl, t.json, sha(t.json), r.engineVersion, r.faces, r.vertices, r.components, r.boundaryEdges, r.nonManifoldEdges, r.selfIntersectingPairs ?? -1, r.genus, r.volume ?? 0, r.watertight, t.severity, t.failedRules,
			r.cellSizeChecks?.thinnestWall?.cells ?? null, r.cellSizeChecks?.narrowestGap?.cells ?? null, Math.round(r.timings.total ?? 0)
		]);
		await insertRows(c, 'bench_rule', ['tpl', 'ord', 'rule', 'passed', 'severity', 'measured', 'limit_text', 'explanation', 'location'], t.outcomes.map((o, i) => [t.tpl, i, o.rule, o.passed, o.severity, o.measured.slice(0, 120), o.limit.slice(0, 120), o.explanation, o.location === undefined || o.location === null ? null : JSON.stringify(o.location)]));
	}
	await insertRows(c, 'bench_rev_tpl', ['revision_id', 'tpl'], tplOf);
	await c.query(
		`INSERT INTO check_run (id, revision_id, gate_profile_id, report, report_sha256, engine_version, faces, vertices, shells, boundary_edges, non_manifold_edges, self_intersecting_pairs, genus, volume, watertight, severity, failed_rules, thinnest_wall_cells, narrowest_gap_cells, duration_ms, created_at)
		 SELECT r.latest_check_id, r.id, g.id, t.report, t.report_sha256, t.engine_version, t.faces, t.vertices, t.shells, t.boundary_edges, t.non_manifold_edges, t.self_intersecting_pairs, t.genus, t.volume, t.watertight, t.severity, t.failed_rules, t.wall, t.gap, t.duration_ms, r.created_at + INTERVAL 30 SECOND
		 FROM bench_rev_tpl b JOIN revision r ON r.id = b.revision_id JOIN part p ON p.id = r.part_id JOIN gate_profile g ON g.project_id = p.project_id JOIN bench_tpl t ON t.tpl = b.tpl`
	);
	const tChecks = performance.now();
	await c.query(
		`INSERT INTO rule_result (check_run_id, rule, passed, severity, measured, limit_text, explanation, location)
		 SELECT r.latest_check_id, x.rule, x.passed, x.severity, x.measured, x.limit_text, x.explanation, x.location
		 FROM bench_rev_tpl b JOIN revision r ON r.id = b.revision_id JOIN bench_rule x ON x.tpl = b.tpl ORDER BY r.id, x.ord`
	);
	await c.query(
		`INSERT INTO job (kind, revision_id, status, attempts, max_attempts, stage, percent, lease_until, created_at, finished_at)
		 SELECT 'check', r.id, CASE r.status WHEN 'awaiting-check' THEN 'queued' WHEN 'checking' THEN 'running' WHEN 'check-incomplete' THEN 'failed' ELSE 'done' END,
		        CASE r.status WHEN 'awaiting-check' THEN 0 ELSE 1 END, 3, CASE r.status WHEN 'checking' THEN 'self-intersections' ELSE NULL END,
		        CASE r.status WHEN 'checking' THEN 40 WHEN 'awaiting-check' THEN 0 ELSE 100 END, NULL, r.created_at,
		        CASE WHEN r.status IN ('awaiting-check', 'checking') THEN NULL ELSE r.created_at + INTERVAL 30 SECOND END
		 FROM revision r WHERE r.id >= ?`,
		[revStart]
	);
	await c.query(
		`INSERT INTO decision (revision_id, kind, by_id, reason, file_sha256, report_sha256, gate_profile_id, gate_profile_version, created_at)
		 SELECT r.id, IF(r.status = 'signed-off', 'sign-off', 'return'), IF(r.status = 'signed-off', ?, ?), IF(r.status = 'signed-off', NULL, 'Close the open edges at the tail and upload again.'),
		        r.sha256, cr.report_sha256, cr.gate_profile_id, 1, r.created_at + INTERVAL 1 DAY
		 FROM revision r JOIN check_run cr ON cr.id = r.latest_check_id WHERE r.id >= ? AND r.status IN ('signed-off', 'returned')`,
		[people.reviewer, people.engineer, revStart]
	);
	await c.commit();
	await c.query('SET SESSION foreign_key_checks = 1, unique_checks = 1');
	const tAll = performance.now();
	for (const table of ['revision', 'check_run', 'part', 'rule_result', 'job', 'decision']) await c.query(`ANALYZE TABLE \`${table}\``);
	const tAnalyze = performance.now();
	const [[sizes]] = (await c.query("SELECT ROUND(SUM(data_length + index_length) / 1048576) AS mb FROM information_schema.tables WHERE table_schema = DATABASE()")) as unknown as [{ mb: number }[]];
	await c.end();
	say(`${REVISIONS.toLocaleString('en')} revisions in ${RUNS} runs over ${parts.length.toLocaleString('en')} parts (${FAMILIES} families of ${PER_RUN} samples, 3 projects); ${tplOf.length.toLocaleString('en')} check runs`);
	say(`states: ${Object.entries(counts).map(([s, n]) => `${s} ${n.toLocaleString('en')}`).join(', ')}`);
	const s = (a: number, b: number) => ((b - a) / 1000).toFixed(1);
	say(`time: template reports ${s(t0, tMeshes)} s, runs/parts/revisions ${s(tMeshes, tSmall)} s, check runs ${s(tSmall, tChecks)} s, rule results + jobs + decisions ${s(tChecks, tAll)} s, ANALYZE ${s(tAll, tAnalyze)} s; total ${s(t0, tAnalyze)} s; database now ${sizes.mb} MB`);
}

main().catch((e) => {
	console.error('[seed-bench] failed:', e);
	process.exit(1);
});
