// Load and fault runs for `npm run stress` (started by scripts/stress/run.sh, which provides
// MariaDB, migrations, demo data and the build). Everything on loopback, bounded in count and time.
//   load:   STRESS_READERS connections on the queue page and on the revision API (autocannon) while
//           STRESS_UPLOADS generator clients upload ~1 M-triangle binary STLs; every check must finish.
//   faults: a check worker SIGKILLed mid-check, MariaDB stopped and started under the running app,
//           the web process SIGKILLed during uploads and checks.
//   scale:  the database grown by scripts/seed-bench.ts to 100,000 revisions in 500 runs; STRESS_READERS
//           readers at a human pace on the queue page and /api/v1/queue (default view, sorted by
//           severity, filtered by a rule) and on the run page when the build has one.
//   ingest: a generator run of STRESS_RUN_FILES (1,000) distinct ~20 k-triangle meshes sent through the
//           run route by 8 concurrent pipeline clients: files accepted per second, time to the last verdict.
//   latency: one pipeline client on a warm server, one 90 k-triangle upload at a time: upload acknowledged
//           and verdict available, p50/p95, the first check after the start on its own; then a 1 M check
//           and the process's resident memory after it and once the engine thread that ran it retired,
//           for each glibc trim threshold in STRESS_TRIM_THRESHOLDS.
// STRESS_PHASES (load,faults,ingest,latency,scale) picks phases; scale runs last since it grows the database.
import { spawn, type ChildProcess } from 'node:child_process';
import { createWriteStream, existsSync, openAsBlob, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import autocannon from 'autocannon';
import { parse as devalueParse } from 'devalue';
import mysql from 'mysql2/promise';
import { towBody } from '../../src/lib/mesh/testing/implicit-shapes';
import { gridFor, marchingCubes } from '../../src/lib/mesh/testing/marching-cubes';
import { writeBinaryStl } from '../../src/lib/mesh/write';
import { checkConsistency } from '../../src/lib/server/consistency';
import { closeDb, getDb } from '../../src/lib/server/db';
import { getStore } from '../../src/lib/server/storage';

const env = (k: string) => {
	const v = process.env[k];
	if (!v) throw new Error(`${k} is not set: run this through npm run stress`);
	return v;
};
const TMP = env('STRESS_TMP');
const PORT = Number(env('STRESS_APP_PORT'));
const BASE = `http://127.0.0.1:${PORT}`;
const UPLOADS = Number(process.env.STRESS_UPLOADS ?? 10);
const READERS = Number(process.env.STRESS_READERS ?? 50);
const LOAD_SECONDS = Number(process.env.STRESS_SECONDS ?? 80);
const CELL = Number(process.env.STRESS_CELL ?? 0.0062); // tow body at this cell size: ~1.0 M triangles
const P95_TARGET_MS = 300;
const RUN_PAGE_TARGET_MS = 500;
const PHASES = new Set((process.env.STRESS_PHASES ?? 'load,faults,ingest,latency,scale').split(',').map((x) => x.trim()));
const SCALE_SECONDS = Number(process.env.STRESS_SCALE_SECONDS ?? 30);

const results: { name: string; ok: boolean; detail: string }[] = [];
const figures: string[] = [];
const say = (s: string) => console.log(`[stress] ${s}`);
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
function record(name: string, ok: boolean, detail: string) {
	results.push({ name, ok, detail });
	say(`${ok ? 'PASS' : 'FAIL'} ${name}: ${detail}`);
}

// ---------- processes ----------
const logs: string[] = [];
function startApp(tag: string, checkWorkers: number, extraEnv: Record<string, string> = {}): ChildProcess {
	const log = path.join(TMP, `app-${tag}.log`);
	logs.push(log);
	const out = createWriteStream(log);
	const p = spawn(process.execPath, ['build'], {
		env: { ...process.env, PORT: String(PORT), HOST: '127.0.0.1', ORIGIN: BASE, BODY_SIZE_LIMIT: 'Infinity', CHECK_WORKERS: String(checkWorkers), ...extraEnv },
		stdio: ['ignore', 'pipe', 'pipe']
	});
	p.stdout!.pipe(out);
	p.stderr!.pipe(out);
	return p;
}
function startWorker(tag: string): ChildProcess {
	const log = path.join(TMP, `worker-${tag}.log`);
	logs.push(log);
	const out = createWriteStream(log);
	const p = spawn(process.execPath, ['--import', 'tsx', 'src/lib/server/jobs/standalone.ts'], { env: { ...process.env, CHECK_WORKERS: '1' }, stdio: ['ignore', 'pipe', 'pipe'] });
	p.stdout!.pipe(out);
	p.stderr!.pipe(out);
	return p;
}
async function waitHttp(ms = 60_000) {
	const t0 = Date.now();
	while (Date.now() - t0 < ms) {
		try {
			if ((await fetch(`${BASE}/health`)).status < 500) return;
		} catch {
			/* not yet */
		}
		await sleep(200);
	}
	throw new Error('the app did not answer in time');
}
async function stop(p: ChildProcess, signal: NodeJS.Signals = 'SIGTERM') {
	if (p.exitCode !== null || p.signalCode !== null) return;
	const done = new Promise((r) => p.once('exit', r));
	p.kill(signal);
	await Promise.race([done, sleep(15_000).then(() => p.kill('SIGKILL'))]);
	await done;
}

let dbProc: ChildProcess | null = null;
function dbPid(): number {
	return Number(readFileSync(path.join(env('STRESS_DB_DIR'), 'mariadbd.pid'), 'utf8'));
}
async function stopDb() {
	const pid = dbPid();
	process.kill(pid, 'SIGTERM');
	for (let i = 0; i < 300; i++) {
		try {
			process.kill(pid, 0);
			await sleep(100);
		} catch {
			return;
		}
	}
	throw new Error('MariaDB did not stop');
}
async function startDb() {
	const dir = env('STRESS_DB_DIR');
	dbProc = spawn(env('STRESS_MARIADBD'), ['--no-defaults', `--datadir=${dir}/data`, `--socket=${env('STRESS_DB_SOCK')}`, `--port=${env('STRESS_DB_PORT')}`, '--bind-address=127.0.0.1', '--user=root', `--pid-file=${dir}/mariadbd.pid`, `--log-error=${dir}/error.log`, '--skip-name-resolve', '--character-set-server=utf8mb4', '--collation-server=utf8mb4_unicode_ci'], { stdio: 'ignore', detached: true });
	dbProc.unref();
	for (let i = 0; i < 300; i++) {
		try {
			const c = await mysql.createConnection({ uri: env('DATABASE_URL') });
			await c.end();
			return;
		} catch {
			await sleep(100);
		}
	}
	throw new Error('MariaDB did not come back');
}

// ---------- data ----------
let sql: mysql.Pool;
async function q<T = mysql.RowDataPacket>(s: string, args: unknown[] = []): Promise<T[]> {
	const [rows] = await sql.query(s, args);
	return rows as T[];
}

async function signIn(email: string): Promise<string> {
	const res = await fetch(`${BASE}/sign-in`, { method: 'POST', redirect: 'manual', headers: { origin: BASE, 'content-type': 'application/x-www-form-urlencoded' }, body: `email=${encodeURIComponent(email)}&password=shellgate-demo` });
	const c = res.headers.getSetCookie().find((h) => h.startsWith('shellgate_session='));
	if (!c) throw new Error(`sign-in as ${email} failed: ${res.status}`);
	return c.split(';')[0];
}
async function createToken(cookie: string): Promise<string> {
	const res = await fetch(`${BASE}/settings?/create`, { method: 'POST', headers: { cookie, origin: BASE, 'x-sveltekit-action': 'true', accept: 'application/json', 'content-type': 'application/x-www-form-urlencoded' }, body: 'name=stress-pipeline' });
	const j = (await res.json()) as { data: string };
	return (devalueParse(j.data) as { newToken: string }).newToken;
}

/** Uploads a file as a pipeline does (raw body, bearer token); returns the revision id. */
async function upload(token: string, file: string | Uint8Array, name: string, part = 'keel-bulb-a', project = 'keel-bulbs'): Promise<{ id: number; ms: number; status: number }> {
	const t0 = performance.now();
	const res = await fetch(`${BASE}/api/v1/projects/${project}/parts/${part}/revisions?fileName=${encodeURIComponent(name)}`, {
		method: 'POST',
		headers: { authorization: `Bearer ${token}`, 'content-type': 'application/octet-stream' },
		body: typeof file === 'string' ? await openAsBlob(file) : (file as Uint8Array<ArrayBuffer>)
	});
	const j = (await res.json().catch(() => ({}))) as { id?: number; message?: string };
	if (res.status >= 300) throw new Error(`upload ${name}: ${res.status} ${j.message ?? ''}`);
	return { id: j.id!, ms: performance.now() - t0, status: res.status };
}

async function waitChecks(ids: number[], ms: number): Promise<Map<number, string>> {
	const t0 = Date.now();
	for (;;) {
		const rows = await q(`SELECT id, status FROM revision WHERE id IN (${ids.map(Number).join(',') || 0})`).catch(() => []);
		const m = new Map(rows.map((r) => [Number(r.id), String(r.status)]));
		if (ids.every((id) => m.has(id) && !['awaiting-check', 'checking'].includes(m.get(id)!))) return m;
		if (Date.now() - t0 > ms) return m;
		await sleep(1000);
	}
}

function makeMeshes(n: number): string[] {
	const s = towBody(1);
	const t0 = performance.now();
	const mesh = marchingCubes(s.field, gridFor(s.min, s.max, CELL));
	const triCount = mesh.indices.length / 3;
	const files: string[] = [];
	for (let i = 0; i < n; i++) {
		// A different 80-byte header per copy: same geometry, distinct content, so no upload is a duplicate.
		const f = path.join(TMP, `tow-${i}.stl`);
		writeFileSync(f, writeBinaryStl(mesh, `stress tow body copy ${i} ${Date.now()}`));
		files.push(f);
	}
	const mb = readFileSync(files[0]).length / 1e6;
	figures.push(`meshes: ${n} × ${triCount.toLocaleString('en')} triangles, ${mb.toFixed(1)} MB each (marching cubes, ${((performance.now() - t0) / 1000).toFixed(1)} s to make)`);
	return files;
}

interface Cannon {
	result: autocannon.Result;
	p50: number;
	p95: number;
	p99: number;
}

/** One bounded autocannon run; latencies collected per response, so p95 is exact (autocannon prints p97.5). */
function cannon(opts: autocannon.Options): Promise<Cannon> {
	const lat: number[] = [];
	return new Promise((resolve, reject) => {
		const inst = autocannon({ pipelining: 1, timeout: 20, ...opts }, (err, result) => {
			if (err) return reject(err);
			lat.sort((a, b) => a - b);
			const at = (p: number) => lat[Math.min(lat.length - 1, Math.floor((p / 100) * lat.length))] ?? NaN;
			resolve({ result, p50: at(50), p95: at(95), p99: at(99) });
		});
		inst.on('response', (_client, _status, _bytes, ms) => lat.push(ms));
	});
}

/**
 * Readers at a human pace: `readers` loops, each on a keep-alive connection of its own, asking
 * once every `periodMs` (starts spread over one period). autocannon cannot do this: with an
 * overall rate below the connection count it lowers the connection count to the rate.
 * Latency is from sending the request to the end of the body.
 */
async function pacedReaders(o: { readers: number; periodMs: number; durationS: number; url: string; headers: Record<string, string> }): Promise<Cannon> {
	const lat: number[] = [];
	let non2xx = 0, errors = 0;
	const t0 = performance.now();
	const end = t0 + o.durationS * 1000;
	const target = new URL(o.url);
	const reader = async (k: number) => {
		const agent = new http.Agent({ keepAlive: true, maxSockets: 1 });
		let next = t0 + (k * o.periodMs) / o.readers;
		while (next < end) {
			const wait = next - performance.now();
			if (wait > 0) await sleep(wait);
			const s = performance.now();
			const status = await new Promise<number>((resolve) => {
				const req = http.get({ host: target.hostname, port: target.port, path: target.pathname + target.search, headers: o.headers, agent, timeout: 20_000 }, (res) => {
					res.on('data', () => {});
					res.on('end', () => resolve(res.statusCode ?? 0));
					res.on('error', () => resolve(0));
				});
				req.on('timeout', () => req.destroy());
				req.on('error', () => resolve(0));
			});
			lat.push(performance.now() - s);
			if (status === 0) errors++;
			else if (status < 200 || status >= 300) non2xx++;
			next += o.periodMs;
		}
		agent.destroy();
	};
	await Promise.all(Array.from({ length: o.readers }, (_, k) => reader(k)));
	const duration = (performance.now() - t0) / 1000;
	const sorted = [...lat].sort((a, b) => a - b);
	const at = (q: number) => sorted[Math.min(sorted.length - 1, Math.floor((q / 100) * sorted.length))] ?? NaN;
	const result = {
		requests: { total: lat.length, average: lat.length / duration },
		duration: Math.round(duration * 100) / 100,
		latency: { max: Math.round(sorted[sorted.length - 1] ?? 0) },
		non2xx,
		errors,
		timeouts: 0,
		connections: o.readers
	} as unknown as autocannon.Result;
	return { result, p50: at(50), p95: at(95), p99: at(99) };
}

function describe(c: Cannon): string {
	const r = c.result;
	return `${r.requests.total} requests in ${r.duration} s (${r.requests.average.toFixed(0)} req/s), p50 ${c.p50.toFixed(0)} ms, p95 ${c.p95.toFixed(0)} ms, p99 ${c.p99.toFixed(0)} ms, max ${r.latency.max} ms; ${r.non2xx} non-2xx, ${r.errors} errors, ${r.timeouts} timeouts, ${r.connections} connections`;
}

/**
 * A marching-cubes tow body of about `targetTris` triangles: triangles grow with 1/cell², so one
 * coarse probe at `probeCell` picks the cell size. Seed 1 with a probe at 0.04 is the bench's own
 * recipe (scripts/bench.ts), so the 90 k body here is the bench's 90 k case.
 */
function towBodyNear(targetTris: number, seed: number, probeCell: number) {
	const s = towBody(seed);
	const probe = marchingCubes(s.field, gridFor(s.min, s.max, probeCell));
	const h = probeCell * Math.sqrt(probe.indices.length / 3 / targetTris);
	return marchingCubes(s.field, gridFor(s.min, s.max, h));
}

const pct = (xs: number[], p: number) => {
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))] ?? NaN;
};
const loadAvg = () => readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ');
const rssMb = (pid: number) => Number(/VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))?.[1] ?? NaN) / 1024;

/** Until a line matching `re` is in the log file; null after `ms`. */
async function waitLog(file: string, re: RegExp, ms: number): Promise<RegExpExecArray | null> {
	const t0 = Date.now();
	while (Date.now() - t0 < ms) {
		const m = existsSync(file) ? re.exec(readFileSync(file, 'utf8')) : null;
		if (m) return m;
		await sleep(100);
	}
	return null;
}

// ---------- phases ----------
async function loadPhase(token: string, cookie: string) {
	const files = makeMeshes(UPLOADS);
	const app = startApp('load', 1);
	await waitHttp();
	const [rev] = await q("SELECT r.id FROM revision r ORDER BY r.id LIMIT 1");
	// Event-loop probe: /health every 100 ms; a long stall would show as a long answer.
	let probing = true;
	const probe: number[] = [];
	const probeLoop = (async () => {
		while (probing) {
			const t0 = performance.now();
			await fetch(`${BASE}/health`).catch(() => null);
			probe.push(performance.now() - t0);
			await sleep(100);
		}
	})();
	const t0 = performance.now();
	const uploads = Promise.all(files.map((f, i) => upload(token, f, `tow-body-${i}.stl`)));
	// Two bounded runs while the uploads stream in and the checks run: first saturation (every
	// connection sends its next request as soon as the last is answered), then readers at a human
	// pace (each of the readers, on a connection of its own, asks once every two seconds).
	const sat = LOAD_SECONDS / 2;
	const satRuns = await Promise.all([
		cannon({ duration: sat, connections: READERS, url: `${BASE}/queue`, headers: { cookie } }),
		cannon({ duration: sat, connections: READERS, url: `${BASE}/api/v1/revisions/${rev.id}?report=0`, headers: { authorization: `Bearer ${token}` } })
	]);
	const pacedRuns = await Promise.all([
		pacedReaders({ readers: READERS, periodMs: 2000, durationS: LOAD_SECONDS - sat, url: `${BASE}/queue`, headers: { cookie } }),
		pacedReaders({ readers: READERS, periodMs: 2000, durationS: LOAD_SECONDS - sat, url: `${BASE}/api/v1/revisions/${rev.id}?report=0`, headers: { authorization: `Bearer ${token}` } })
	]);
	const up = await uploads;
	const uploadedAt = performance.now();
	const ids = up.map((u) => u.id);
	const statuses = await waitChecks(ids, 20 * 60_000);
	const checkedAt = performance.now();
	probing = false;
	await probeLoop;
	const done = ids.filter((id) => !['awaiting-check', 'checking'].includes(statuses.get(id) ?? 'checking'));
	const runs = await q(`SELECT revision_id, COUNT(*) AS n, MAX(duration_ms) AS ms FROM check_run WHERE revision_id IN (${ids.join(',')}) GROUP BY revision_id`);
	const sorted = [...probe].sort((a, b) => a - b);
	const runsAll = [['saturated', satRuns], ['paced', pacedRuns]] as const;
	for (const [mode, [page, api]] of runsAll) {
		for (const [name, r] of [['queue page', page], ['revision API', api]] as const) figures.push(`${name} (${mode}): ${describe(r)}`);
	}
	figures.push(`uploads: ${up.length} × ~50 MB in ${((uploadedAt - t0) / 1000).toFixed(1)} s total, each ${Math.min(...up.map((u) => u.ms / 1000)).toFixed(1)}–${Math.max(...up.map((u) => u.ms / 1000)).toFixed(1)} s`);
	figures.push(`checks: ${done.length}/${ids.length} finished (${[...new Set(done.map((id) => statuses.get(id)))].join(', ')}) ${((checkedAt - t0) / 1000).toFixed(0)} s after the first upload began; engine time per check ${runs.map((r) => (Number(r.ms) / 1000).toFixed(1)).join(', ')} s; check rows per revision ${[...new Set(runs.map((r) => Number(r.n)))].join(',')}`);
	figures.push(`event loop probe (/health every 100 ms during load and checks): ${probe.length} answers, p50 ${sorted[Math.floor(sorted.length / 2)].toFixed(0)} ms, p99 ${sorted[Math.floor(sorted.length * 0.99)].toFixed(0)} ms, max ${sorted[sorted.length - 1].toFixed(0)} ms`);
	const [satPage, satApi] = satRuns;
	const [pacedPage, pacedApi] = pacedRuns;
	record('queue page p95 under load, readers at a human pace', pacedPage.p95 <= P95_TARGET_MS, `p95 = ${pacedPage.p95.toFixed(0)} ms with ${READERS} readers at ${READERS / 2} req/s total (target < ${P95_TARGET_MS} ms)`);
	// Back-to-back connections are a throughput test, not readers: by Little's law their latency
	// is connections ÷ throughput whatever the page costs, so it is reported, not held to the target.
	figures.push(`queue page saturated (throughput, not a reader target): ${satPage.result.requests.average.toFixed(0)} req/s beside ${satApi.result.requests.average.toFixed(0)} req/s on the API, p95 ${satPage.p95.toFixed(0)} ms with ${READERS} + ${READERS} connections back to back (Little's law: ${(2 * READERS / (satPage.result.requests.average + satApi.result.requests.average) * 1000).toFixed(0)} ms mean)`);
	record('every upload checked', done.length === ids.length && runs.every((r) => Number(r.n) === 1), `${done.length}/${ids.length} finished, one check row each`);
	const all = [satPage, satApi, pacedPage, pacedApi].map((r) => r.result);
	record('no server errors under load', all.every((r) => r.non2xx === 0 && r.errors === 0), `${all.reduce((a, r) => a + r.non2xx, 0)} non-2xx, ${all.reduce((a, r) => a + r.errors + r.timeouts, 0)} errors or timeouts`);
	record('web process answers while the engine runs', sorted[sorted.length - 1] < 2000, `longest /health answer ${sorted[sorted.length - 1].toFixed(0)} ms while checks ran in worker threads`);
	await stop(app);
}

async function workerKillPhase(token: string) {
	const app = startApp('faults', 0);
	await waitHttp();
	const [file] = makeMeshes(1).map((f) => f);
	const w1 = startWorker('doomed');
	const { id } = await upload(token, file, 'killed-mid-check.stl', 'mag-tow-body', 'tow-bodies');
	let stage = '';
	for (let i = 0; i < 600; i++) {
		const [j] = await q('SELECT status, stage, percent FROM job WHERE revision_id = ? ORDER BY id DESC LIMIT 1', [id]);
		if (j?.status === 'running' && Number(j.percent) >= 5) {
			stage = `${j.stage} ${j.percent}%`;
			break;
		}
		await sleep(250);
	}
	await stop(w1, 'SIGKILL');
	const w2 = startWorker('rescuer');
	const statuses = await waitChecks([id], 5 * 60_000);
	const [j] = await q('SELECT status, attempts FROM job WHERE revision_id = ? ORDER BY id DESC LIMIT 1', [id]);
	const [runs] = await q('SELECT COUNT(*) AS n FROM check_run WHERE revision_id = ?', [id]);
	const jobs = await q('SELECT COUNT(*) AS n FROM job WHERE revision_id = ?', [id]);
	record('worker SIGKILLed mid-check', j.status === 'done' && Number(j.attempts) === 2 && Number(runs.n) === 1 && Number(jobs[0].n) === 1, `killed at "${stage}"; after the 30 s lease another worker finished it: job ${j.status} after ${j.attempts} attempts, ${runs.n} check row, revision ${statuses.get(id)}`);
	return { app, w2 };
}

async function dbOutagePhase(token: string, cookie: string, smallFile: string) {
	const before = await upload(token, smallFile, 'before-outage.stl', 'ctd-pod', 'sensor-pods');
	await stopDb();
	const t0 = performance.now();
	const api = await fetch(`${BASE}/api/v1/queue`, { headers: { authorization: `Bearer ${token}` } });
	const apiBody = await api.text();
	const page = await fetch(`${BASE}/queue`, { headers: { cookie } });
	const pageBody = await page.text();
	const up = await fetch(`${BASE}/api/v1/projects/sensor-pods/parts/ctd-pod/revisions?fileName=during.stl`, { method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': 'application/octet-stream' }, body: readFileSync(smallFile) });
	const upBody = await up.text();
	const outageMs = performance.now() - t0;
	await startDb();
	let recoveredMs = -1;
	const t1 = performance.now();
	for (let i = 0; i < 300; i++) {
		const r = await fetch(`${BASE}/api/v1/queue`, { headers: { authorization: `Bearer ${token}` } }).catch(() => null);
		if (r?.status === 200) {
			recoveredMs = performance.now() - t1;
			break;
		}
		await sleep(100);
	}
	const statuses = await waitChecks([before.id], 3 * 60_000);
	const jsonOk = api.status === 503 && /not reachable/.test(JSON.parse(apiBody).message ?? '');
	const pageOk = page.status === 503 && /not reachable/.test(pageBody) && !pageBody.includes('<');
	const upOk = up.status === 503;
	record('MariaDB stopped and started under the app', jsonOk && pageOk && upOk && recoveredMs >= 0 && !['awaiting-check', 'checking', undefined].includes(statuses.get(before.id)), `during the outage: API ${api.status} JSON "${apiBody.slice(12, 70)}…", page ${page.status} plain text, upload ${up.status} ${upBody.slice(0, 60)} (answered in ${outageMs.toFixed(0)} ms); answering again ${(recoveredMs / 1000).toFixed(1)} s after the restart without an app restart; upload accepted before the outage is ${statuses.get(before.id)}`);
}

async function serverKillPhase(token: string, files: string[]) {
	let app = startApp('killed', 1);
	await waitHttp();
	const accepted: number[] = [];
	const attempts = files.map((f, i) =>
		upload(token, f, `kill-${i}.stl`, `kill-part-${i}`, 'tow-bodies').then(
			(u) => accepted.push(u.id),
			() => null
		)
	);
	// Kill once the first uploads are in and a check is running, while others are still streaming.
	for (let i = 0; i < 600 && accepted.length < 2; i++) await sleep(100);
	await sleep(1500);
	await stop(app, 'SIGKILL');
	await Promise.all(attempts);
	const tmpLeft = existsSync(path.join(env('SHELLGATE_DATA_DIR'), 'tmp')) ? readdirSync(path.join(env('SHELLGATE_DATA_DIR'), 'tmp')).length : 0;
	app = startApp('restarted', 1);
	await waitHttp();
	const revs = await q("SELECT r.id, r.status FROM revision r JOIN part p ON p.id = r.part_id WHERE p.slug LIKE 'kill-part-%'");
	const ids = revs.map((r) => Number(r.id));
	const statuses = await waitChecks(ids, 5 * 60_000);
	const unfinished = ids.filter((id) => ['awaiting-check', 'checking'].includes(statuses.get(id) ?? 'checking'));
	const cons = await checkConsistency(getDb(), getStore());
	const noJob = await q("SELECT COUNT(*) AS n FROM revision r LEFT JOIN job j ON j.revision_id = r.id WHERE j.id IS NULL");
	const open = await q("SELECT COUNT(*) AS n FROM job WHERE status IN ('queued', 'running')");
	record(
		'web process SIGKILLed during uploads and checks',
		unfinished.length === 0 && cons.missingFiles.length === 0 && accepted.every((id) => ids.includes(id)) && Number(noJob[0].n) === 0,
		`${accepted.length} uploads answered before the kill, ${files.length - accepted.length} cut off; after the restart ${ids.length} revisions exist, all checked (${[...new Set(ids.map((id) => statuses.get(id)))].join(', ')}), ${cons.missingFiles.length} rows missing their file, ${cons.orphanFiles.length} orphan files, ${tmpLeft} temporary spool files left by the killed process, ${open[0].n} jobs still open`
	);
	return app;
}

async function secretsInLogs(token: string) {
	await sleep(500);
	let hits = 0;
	for (const f of logs) {
		const text = existsSync(f) ? readFileSync(f, 'utf8') : '';
		if (text.includes(token) || text.includes(token.slice(3)) || text.includes('shellgate-demo') || /\$argon2/.test(text)) hits++;
	}
	record('no token or password in any log', hits === 0, `${logs.length} app and worker logs searched for the API token, the demo password and password hashes: ${hits} hits`);
}

/**
 * The queue at scale: seed-bench grows the database, then each address gets READERS readers at a
 * human pace (one request every 2 s each) for SCALE_SECONDS, one address at a time, with no check
 * workers running (the bench rows have no files to check).
 */
const RUN_FILES = Number(process.env.STRESS_RUN_FILES ?? 1000);

/**
 * A run of RUN_FILES samples through POST /api/v1/projects/{project}/runs/{run}/files (raw body,
 * bearer token, part from the file name, metadata per file), 8 clients at once as a generator's
 * upload pool would send them; the app checks with two engine threads (CHECK_WORKERS=2).
 */
async function ingestPhase(token: string) {
	const mesh = towBodyNear(20_000, 3, 0.05);
	const tris = mesh.indices.length / 3;
	const bodies = Array.from({ length: RUN_FILES }, (_, i) => writeBinaryStl(mesh, `stress run sample ${i} ${Date.now()}`));
	process.env.RUN_DIGEST_SETTLE_MS ??= '3000';
	const app = startApp('ingest', 2);
	await waitHttp();
	const runName = `stress-run-${Date.now().toString(36)}`;
	const ids: number[] = [];
	let failed = 0;
	let next = 0;
	const t0 = performance.now();
	const lat: number[] = [];
	await Promise.all(
		Array.from({ length: 8 }, async () => {
			for (let i = next++; i < RUN_FILES; i = next++) {
				const t1 = performance.now();
				const res = await fetch(`${BASE}/api/v1/projects/keel-bulbs/runs/${runName}/files?fileName=sample-${String(i).padStart(4, '0')}.stl`, {
					method: 'POST',
					headers: { authorization: `Bearer ${token}`, 'content-type': 'application/octet-stream', 'x-shellgate-run-kind': 'samples', 'x-shellgate-meta': JSON.stringify({ sample: i, seed: 1000 + i }) },
					body: bodies[i]
				}).catch(() => null);
				lat.push(performance.now() - t1);
				const j = res ? ((await res.json().catch(() => ({}))) as { id?: number }) : {};
				if (res?.status === 201 && j.id) ids.push(j.id);
				else failed++;
			}
		})
	);
	const acceptS = (performance.now() - t0) / 1000;
	const states = await waitChecks(ids, 30 * 60_000);
	const lastS = (performance.now() - t0) / 1000;
	const pending = ids.filter((id) => ['awaiting-check', 'checking'].includes(states.get(id) ?? 'awaiting-check')).length;
	lat.sort((a, b) => a - b);
	const mb = bodies[0].length / 1e6;
	figures.push(
		`ingest: ${RUN_FILES} × ${tris.toLocaleString('en')} triangles (${mb.toFixed(1)} MB each) into one run, 8 clients: all accepted in ${acceptS.toFixed(1)} s (${(ids.length / acceptS).toFixed(0)} files/s; upload p50 ${lat[Math.floor(lat.length / 2)].toFixed(0)} ms, p95 ${lat[Math.floor(lat.length * 0.95)].toFixed(0)} ms), last verdict ${lastS.toFixed(1)} s after the first upload (${(ids.length / lastS).toFixed(1)} checked/s with 2 engine threads); load average ${readFileSync('/proc/loadavg', 'utf8').split(' ')[0]}`
	);
	record(`ingest: ${RUN_FILES} files of a run accepted and checked`, failed === 0 && ids.length === RUN_FILES && pending === 0, `${ids.length} accepted, ${failed} refused or failed, ${pending} still unchecked`);
	await sleep(Number(process.env.RUN_DIGEST_SETTLE_MS) + 4000);
	const [dig] = await q("SELECT COUNT(*) AS n FROM mail_outbox WHERE subject LIKE ?", [`%${runName}%`]);
	figures.push(`ingest: ${Number(dig.n)} digest mail(s) queued for the run (settle time ${process.env.RUN_DIGEST_SETTLE_MS ?? 'default'} ms)`);
	await stop(app);
}

const LATENCY_RUNS = Number(process.env.STRESS_LATENCY_RUNS ?? 20);
/** How often the latency phase looks for the verdict (a primary-key read in MariaDB, not through the app). */
const VERDICT_POLL_MS = 5;

/** Waits until no job is queued or running (at most 120 s); how many there were at first. */
async function waitQueueEmpty(): Promise<number> {
	const count = async () => Number((await q('SELECT COUNT(*) AS n FROM job WHERE status IN (?, ?)', ['queued', 'running']))[0]?.n ?? 0);
	const first = await count();
	for (let i = 0, n = first; n > 0 && i < 2400; i++, n = await count()) await sleep(50);
	return first;
}

/** One upload, then its verdict: the revision row polled in MariaDB, then confirmed once through the API. */
async function uploadToVerdict(token: string, bytes: Uint8Array, name: string, part: string) {
	const t0 = performance.now();
	const epoch0 = Date.now();
	const up = await upload(token, bytes, name, part, 'keel-bulbs');
	const ackMs = performance.now() - t0;
	let status = 'awaiting-check';
	for (let i = 0; i < 60_000 && ['awaiting-check', 'checking'].includes(status); i++) {
		const [r] = await q('SELECT status FROM revision WHERE id = ?', [up.id]);
		status = String(r?.status);
		if (['awaiting-check', 'checking'].includes(status)) await sleep(VERDICT_POLL_MS);
	}
	const verdictMs = performance.now() - t0;
	const res = await fetch(`${BASE}/api/v1/revisions/${up.id}?report=0`, { headers: { authorization: `Bearer ${token}` } });
	const api = (await res.json()) as { status?: string };
	const apiMs = performance.now() - t0;
	// Where the time went, from the rows' own timestamps (MariaDB and this process share the clock).
	const [t] = await q(
		`SELECT j.created_at AS queued, (SELECT MIN(a.at) FROM audit_event a WHERE a.entity = 'revision' AND a.entity_id = CAST(j.revision_id AS CHAR) AND a.action = 'check-started') AS claimed,
		 cr.created_at AS written, cr.duration_ms AS engine, j.finished_at AS finished, LENGTH(cr.report) AS report_bytes, JSON_EXTRACT(cr.report, '$.timings') AS timings
		 FROM job j JOIN check_run cr ON cr.revision_id = j.revision_id WHERE j.revision_id = ? AND j.kind = 'check' ORDER BY j.id DESC, cr.id DESC LIMIT 1`,
		[up.id]
	);
	const at = (d: unknown) => (d instanceof Date ? d.getTime() - epoch0 : NaN);
	return {
		id: up.id,
		status,
		apiStatus: api.status,
		ackMs,
		verdictMs,
		apiMs,
		queuedAt: at(t?.queued),
		claimedAt: at(t?.claimed),
		writtenAt: at(t?.written),
		finishedAt: at(t?.finished),
		engineMs: Number(t?.engine ?? NaN),
		reportBytes: Number(t?.report_bytes ?? NaN),
		stages: (typeof t?.timings === 'string' ? JSON.parse(t.timings) : (t?.timings ?? {})) as Record<string, number>
	};
}

/**
 * Upload to verdict on a warm server, one upload at a time, as a pipeline that waits for each
 * verdict sends them. Per trim threshold: a fresh app (CHECK_WORKERS=1), its engine thread warm,
 * then LATENCY_RUNS distinct copies of the bench's 90 k tow body; the first is the first check
 * after the start. Then one 1 M upload, and the app's resident memory after its verdict and once
 * the engine thread that ran it retired (5 s idle) and a fresh warm one took its place.
 */
async function latencyPhase(token: string) {
	const tG = performance.now();
	const m90 = towBodyNear(90_000, 1, 0.04);
	const shape = towBody(1);
	const m1m = marchingCubes(shape.field, gridFor(shape.min, shape.max, CELL));
	const tris90 = m90.indices.length / 3;
	figures.push(`latency meshes: ${tris90.toLocaleString('en')} triangles (${(writeBinaryStl(m90).length / 1e6).toFixed(1)} MB) and ${(m1m.indices.length / 3).toLocaleString('en')} triangles, made in ${((performance.now() - tG) / 1000).toFixed(1)} s`);
	const thresholds = (process.env.STRESS_TRIM_THRESHOLDS ?? process.env.MALLOC_TRIM_THRESHOLD_ ?? '134217728').split(',').map((x) => x.trim()).filter(Boolean);
	let copy = 0;
	const body = (m: typeof m90) => writeBinaryStl(m, `stress latency copy ${copy++} ${Date.now()}`);
	for (const trim of thresholds) {
		const tag = `latency-trim-${trim}`;
		const t0 = performance.now();
		const app = startApp(tag, 1, { MALLOC_TRIM_THRESHOLD_: trim });
		await waitHttp();
		const warm = await waitLog(path.join(TMP, `app-${tag}.log`), /engine threads warm in (\d+) ms/, 120_000);
		// The demo data's own checks (and any left from an earlier phase) run first, or the first
		// upload would wait behind them in the queue and its time say nothing about the engine.
		const backlog = await waitQueueEmpty();
		const startedS = (performance.now() - t0) / 1000;
		const rssWarm = rssMb(app.pid!);
		const runs: Awaited<ReturnType<typeof uploadToVerdict>>[] = [];
		for (let i = 0; i < LATENCY_RUNS; i++) runs.push(await uploadToVerdict(token, body(m90), `latency-${i}.stl`, `latency-90k-${trim}`));
		const rss90 = rssMb(app.pid!);
		const big = await uploadToVerdict(token, body(m1m), 'latency-1m.stl', `latency-1m-${trim}`);
		const rssBig = rssMb(app.pid!);
		// The thread that ran the 1 M file retires after 5 s idle; its replacement warms up beside.
		await sleep(5000 + 4000);
		const rssIdle = rssMb(app.pid!);
		const after = await uploadToVerdict(token, body(m90), 'latency-after-1m.stl', `latency-90k-${trim}`);
		const rssEnd = rssMb(app.pid!);
		await stop(app);
		const [first, ...rest] = runs;
		const f = (x: number) => x.toFixed(0);
		const ps = (xs: number[]) => `p50 ${f(pct(xs, 50))} ms, p95 ${f(pct(xs, 95))} ms`;
		const sum = (k: 'ackMs' | 'verdictMs' | 'apiMs' | 'queuedAt' | 'claimedAt' | 'writtenAt' | 'finishedAt' | 'engineMs' | 'reportBytes') => rest.map((r) => r[k]);
		figures.push(
			`latency (MALLOC_TRIM_THRESHOLD_=${trim}): app answering, engine thread warm and queue empty ${startedS.toFixed(1)} s after start (warm-up ${warm?.[1] ?? '?'} ms); ${tris90.toLocaleString('en')}-triangle uploads one at a time, ${rest.length} after the first: ` +
				`acknowledged ${ps(sum('ackMs'))}; verdict ${ps(sum('verdictMs'))} (MariaDB polled every ${VERDICT_POLL_MS} ms; through the API ${ps(sum('apiMs'))}); ` +
				`first check after the start (once the ${backlog} jobs queued before it were done): acknowledged ${f(first.ackMs)} ms, verdict ${f(first.verdictMs)} ms (engine ${f(first.engineMs)} ms; job queued ${f(first.queuedAt)}, claimed ${f(first.claimedAt)}, check row written ${f(first.writtenAt)}, job finished ${f(first.finishedAt)} ms after the upload began); load average ${loadAvg()}`
		);
		figures.push(
			`latency breakdown, medians from the rows' timestamps (ms after the upload began): job queued ${f(pct(sum('queuedAt'), 50))}, acknowledged ${f(pct(sum('ackMs'), 50))}, claimed ${f(pct(sum('claimedAt'), 50))}, check row written ${f(pct(sum('writtenAt'), 50))} (engine's own total ${f(pct(sum('engineMs'), 50))}), job finished ${f(pct(sum('finishedAt'), 50))}, verdict seen ${f(pct(sum('verdictMs'), 50))}; report ${(pct(sum('reportBytes'), 50) / 1024).toFixed(0)} KB`
		);
		const stageNames = Object.keys(first.stages).filter((k) => k !== 'total');
		figures.push(
			`latency engine stages, first check after the start / median of the rest (ms): ${stageNames.map((k) => `${k} ${f(first.stages[k])}/${f(pct(rest.map((r) => r.stages[k] ?? NaN), 50))}`).join(', ')}; verdicts of checks 1-4: ${runs
				.slice(0, 4)
				.map((r) => f(r.verdictMs))
				.join(', ')} ms`
		);
		figures.push(
			`latency memory (MALLOC_TRIM_THRESHOLD_=${trim}): app RSS ${f(rssWarm)} MB warm, ${f(rss90)} MB after the 90 k checks, ${f(rssBig)} MB after a 1 M check (verdict ${f(big.verdictMs)} ms, engine ${f(big.engineMs)} ms), ${f(rssIdle)} MB 9 s later (thread retired and replaced), ${f(rssEnd)} MB after one more 90 k check (verdict ${f(after.verdictMs)} ms, engine ${f(after.engineMs)} ms)`
		);
		const all = [...runs, big, after];
		record(
			`latency (trim ${trim}): every upload got its verdict`,
			all.every((r) => !['awaiting-check', 'checking'].includes(r.status) && r.apiStatus === r.status),
			`${all.length} uploads, states ${[...new Set(all.map((r) => r.status))].join(', ')}, API agreed on ${all.filter((r) => r.apiStatus === r.status).length}`
		);
	}
}

async function scalePhase(token: string, cookie: string) {
	const t0 = performance.now();
	const seeded = await new Promise<{ code: number | null; out: string }>((resolve) => {
		const p = spawn(process.execPath, ['--import', 'tsx', 'scripts/seed-bench.ts'], { env: process.env, stdio: ['ignore', 'pipe', 'pipe'] });
		let out = '';
		p.stdout!.on('data', (d) => (out += d));
		p.stderr!.on('data', (d) => (out += d));
		p.on('exit', (code) => resolve({ code, out }));
	});
	const seedS = (performance.now() - t0) / 1000;
	for (const line of seeded.out.trim().split('\n')) say(line);
	record('bench database grown by scripts/seed-bench.ts', seeded.code === 0, `exit ${seeded.code} after ${seedS.toFixed(0)} s`);
	if (seeded.code !== 0) return;
	figures.push(`seed-bench: ${seeded.out.split('\n').filter((l) => /revisions in|time:/.test(l)).map((l) => l.replace('[seed-bench] ', '')).join('; ')}`);
	// Let InnoDB write back the 3 GB just inserted first, so the readers measure the queue, not the flush.
	const tFlush = performance.now();
	for (let i = 0; i < 180; i++) {
		const [d] = await q("SHOW GLOBAL STATUS LIKE 'Innodb_buffer_pool_pages_dirty'");
		if (Number(d.Value) < 100) break;
		await sleep(1000);
	}
	figures.push(`scale: InnoDB wrote back the seeded pages in ${((performance.now() - tFlush) / 1000).toFixed(0)} s before the readers started`);
	const app = startApp('scale', 0);
	await waitHttp();
	const [r] = await q("SELECT r.id FROM run r JOIN project p ON p.id = r.project_id WHERE p.slug LIKE 'bench-%' ORDER BY r.id DESC LIMIT 1");
	const targets: { name: string; url: string; headers: Record<string, string>; target: number }[] = [
		{ name: 'queue page, default (newest of each part, needs action, oldest first)', url: `${BASE}/queue`, headers: { cookie }, target: P95_TARGET_MS },
		{ name: 'GET /api/v1/queue, default', url: `${BASE}/api/v1/queue`, headers: { authorization: `Bearer ${token}` }, target: P95_TARGET_MS },
		{ name: 'queue page, sorted by severity', url: `${BASE}/queue?sort=severity&dir=desc`, headers: { cookie }, target: P95_TARGET_MS },
		{ name: 'GET /api/v1/queue, sorted by severity', url: `${BASE}/api/v1/queue?sort=severity&dir=desc`, headers: { authorization: `Bearer ${token}` }, target: P95_TARGET_MS },
		{ name: 'queue page, rule filter (closed)', url: `${BASE}/queue?rule=closed`, headers: { cookie }, target: P95_TARGET_MS },
		{ name: 'GET /api/v1/queue, rule filter (closed)', url: `${BASE}/api/v1/queue?rule=closed`, headers: { authorization: `Bearer ${token}` }, target: P95_TARGET_MS },
		{ name: 'GET /api/v1/queue, one run', url: `${BASE}/api/v1/queue?run=${r.id}&status=all`, headers: { authorization: `Bearer ${token}` }, target: P95_TARGET_MS },
		{ name: 'GET /api/v1/queue, every revision (superseded too)', url: `${BASE}/api/v1/queue?revisions=all`, headers: { authorization: `Bearer ${token}` }, target: Infinity }
	];
	// The run page is measured when this build has one (a hook for when it lands).
	if (existsSync('src/routes/(app)/runs/[id]/+page.svelte') || existsSync('src/routes/(app)/runs/[id]/+page.server.ts')) {
		targets.push({ name: `run page /runs/${r.id} (200 revisions)`, url: `${BASE}/runs/${r.id}`, headers: { cookie }, target: RUN_PAGE_TARGET_MS });
	} else figures.push('run page: not in this build (no src/routes/(app)/runs/[id]); the scale phase measures /runs/<id> once it is');
	const load = () => readFileSync('/proc/loadavg', 'utf8').split(' ')[0];
	for (const t of targets) {
		// One warm-up request, so the first reader does not pay for a cold buffer pool alone.
		await fetch(t.url, { headers: t.headers }).then((x) => x.arrayBuffer());
		const before = load();
		const c = await pacedReaders({ readers: READERS, periodMs: 2000, durationS: SCALE_SECONDS, url: t.url, headers: t.headers });
		const line = `${t.name}: ${describe(c)}; load average ${before} → ${load()}`;
		figures.push(`scale ${line}`);
		if (Number.isFinite(t.target)) record(`scale: ${t.name} p95 < ${t.target} ms`, c.p95 < t.target && c.result.non2xx === 0 && c.result.errors === 0, `p95 = ${c.p95.toFixed(0)} ms with ${READERS} readers at ${READERS / 2} req/s (load average ${before})`);
	}
	const [{ n }] = await q('SELECT COUNT(*) AS n FROM revision');
	figures.push(`scale database: ${Number(n).toLocaleString('en')} revisions`);
	await stop(app);
}

async function main() {
	sql = mysql.createPool({ uri: env('DATABASE_URL'), connectionLimit: 3 });
	const t0 = performance.now();
	const boot = startApp('setup', 0);
	await waitHttp();
	const cookie = await signIn('engineer@example.test');
	const token = await createToken(cookie);
	await stop(boot);
	if (PHASES.has('load')) {
		say(`load: ${READERS} connections on /queue and ${READERS} on /api/v1/revisions/:id for ${LOAD_SECONDS} s, ${UPLOADS} uploads of ~1 M triangles`);
		await loadPhase(token, cookie);
	}
	if (PHASES.has('faults')) {
		say('faults: worker kill');
		const { app, w2 } = await workerKillPhase(token);
		const small = path.join(TMP, 'small.stl');
		const s = towBody(5);
		writeFileSync(small, writeBinaryStl(marchingCubes(s.field, gridFor(s.min, s.max, 0.05))));
		say('faults: database outage');
		await dbOutagePhase(token, cookie, small);
		await stop(w2);
		await stop(app);
		say('faults: web process kill');
		const killFiles = makeMeshes(4);
		const last = await serverKillPhase(token, killFiles);
		await secretsInLogs(token);
		await stop(last);
	}
	if (PHASES.has('latency')) {
		say(`latency: ${LATENCY_RUNS} uploads of a 90 k mesh to their verdicts, one at a time, then a 1 M check and the memory after it`);
		await latencyPhase(token);
	}
	if (PHASES.has('ingest')) {
		say(`ingest: a run of ${RUN_FILES} meshes through the run route`);
		await ingestPhase(token);
	}
	if (PHASES.has('scale')) {
		say(`scale: seed-bench, then ${READERS} paced readers per queue address for ${SCALE_SECONDS} s each`);
		await scalePhase(token, cookie);
	}
	await closeDb();
	await sql.end();
	console.log('\n[stress] figures');
	for (const f of figures) console.log(`  ${f}`);
	console.log('[stress] results');
	for (const r of results) console.log(`  ${r.ok ? 'PASS' : 'FAIL'}  ${r.name}: ${r.detail}`);
	const failed = results.filter((r) => !r.ok).length;
	console.log(`[stress] ${results.length - failed}/${results.length} passed in ${((performance.now() - t0) / 1000).toFixed(0)} s; logs in ${TMP} (STRESS_KEEP=1 keeps them)`);
	process.exitCode = failed ? 1 : 0;
}

main().catch((e) => {
	console.error('[stress] aborted:', e);
	process.exit(2);
});
