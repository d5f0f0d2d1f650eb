// Who may reach what, over HTTP against the built app: every page, form action and API route found
// under src/routes × every role and a signed-out visitor. A route without an entry in ACCESS fails
// the test, so new routes get decided on. Also: cross-site posts, cookie flags, token revocation,
// secrets in answers, file download headers, another team's data, bad input never answering 500.
import { expect, request as pwRequest, test, type APIRequestContext, type APIResponse } from '@playwright/test';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import mysql from 'mysql2/promise';
import { parse as devalueParse } from 'devalue';
import { DEMO_PASSWORD } from './helpers';

type Who = 'admin' | 'engineer' | 'designer' | 'reviewer' | 'visitor';
const WHO: Who[] = ['admin', 'engineer', 'designer', 'reviewer', 'visitor'];
const ALL: Who[] = ['admin', 'engineer', 'designer', 'reviewer'];
type Rule = 'public' | Who[];

/** Expected access per route: `page PATH`, `action PATH?/name`, `METHOD PATH`. */
const ACCESS: Record<string, Rule> = {
	'page /': ALL,
	'page /admin/users': ['admin'],
	'action /admin/users?/invite': ['admin'],
	'action /admin/users?/roles': ['admin'],
	'page /projects': ALL,
	'page /projects/[slug]': ALL,
	'action /projects/[slug]?/batchRepair': ['engineer'],
	'action /projects/[slug]?/recheckStale': ['engineer'],
	'action /projects/[slug]?/profile': ['admin'],
	'action /projects/[slug]?/settings': ['admin'],
	'page /queue': ALL,
	// Each bulk action checks its own permission per request; the probe below asks for a sign-off.
	'action /queue?/bulk': ['reviewer'],
	'page /revisions/[id]': ALL,
	'action /revisions/[id]?/comment': ['engineer', 'designer', 'reviewer'],
	'action /revisions/[id]?/recheck': ['engineer'],
	'action /revisions/[id]?/return': ['engineer', 'reviewer'],
	'action /revisions/[id]?/repair': ['engineer'],
	'action /revisions/[id]?/signOff': ['reviewer'],
	'page /revisions/[id]/clearance': ALL,
	'page /settings': ALL,
	'action /settings?/create': ALL,
	'action /settings?/revoke': ALL,
	'page /upload': ['designer', 'engineer'],
	'POST /api/v1/projects/[project]/parts/[part]/revisions': ['designer', 'engineer'],
	'GET /api/v1/queue': ALL,
	'POST /api/v1/queue/bulk': ['reviewer'],
	'GET /api/v1/revisions/[id]': ALL,
	'GET /api/v1/revisions/[id]/clearance': ALL,
	'POST /api/v1/revisions/[id]/comments': ['engineer', 'designer', 'reviewer'],
	'POST /api/v1/revisions/[id]/sign-off': ['reviewer'],
	'GET /api/v1/revisions/[id]/file': ALL,
	'GET /api/v1/revisions/[id]/export': ALL,
	'page /runs/[id]': ALL,
	'action /runs/[id]?/batchRepair': ['engineer'],
	'GET /api/v1/runs/[id]': ALL,
	'POST /api/v1/projects/[project]/runs/[run]/files': ['designer', 'engineer'],
	// The dataset hand-off: the people who feed and use the generator's shapes, not an admin-only account.
	'GET /api/v1/runs/[id]/dataset': ['engineer', 'designer', 'reviewer'],
	'GET /api/v1/projects/[project]/dataset': ['engineer', 'designer', 'reviewer'],
	'page /dev/mailbox': 'public',
	'page /dev/viewer': 'public',
	'GET /health': 'public',
	'page /invite/[token]': 'public',
	'action /invite/[token]?/default': 'public',
	'page /reset': 'public',
	'action /reset?/default': 'public',
	'page /reset/[token]': 'public',
	'action /reset/[token]?/default': 'public',
	'page /sign-in': 'public',
	'action /sign-in?/default': 'public',
	// GET /sign-out only sends everyone on to the sign-in page.
	'page /sign-out': [],
	'action /sign-out?/default': 'public'
};

const ROUTES_DIR = 'src/routes';

function walk(dir: string): string[] {
	return readdirSync(dir).flatMap((f) => {
		const p = path.join(dir, f);
		return statSync(p).isDirectory() ? walk(p) : [p];
	});
}

/** Every page, action and endpoint under src/routes, as ACCESS keys. */
function discoverRoutes(): string[] {
	const keys = new Set<string>();
	for (const file of walk(ROUTES_DIR)) {
		const rel = path.relative(ROUTES_DIR, path.dirname(file)).split(path.sep).filter((s) => s && !/^\(.*\)$/.test(s));
		const route = '/' + rel.join('/');
		const base = path.basename(file);
		if (base === '+page.svelte' || base === '+page.server.ts') keys.add(`page ${route}`);
		if (base === '+page.server.ts') {
			const src = readFileSync(file, 'utf8');
			if (!src.includes('export const actions')) continue;
			let block = src.slice(src.indexOf('export const actions'));
			// Actions built by a shared helper (`export const actions = route.actions`): read the helper.
			if (!/^export const actions[^=]*=\s*\{/.test(block)) {
				block = [...src.matchAll(/from '\$lib\/([^']+)'/g)]
					.map((m) => {
						try {
							const lib = readFileSync(`src/lib/${m[1]}.ts`, 'utf8');
							return lib.includes('actions: {') ? lib.slice(lib.indexOf('actions: {')) : '';
						} catch {
							return '';
						}
					})
					.join('\n');
			}
			for (const m of block.matchAll(/^\t+([A-Za-z]+): async/gm)) keys.add(`action ${route}?/${m[1]}`);
		}
		if (base === '+server.ts') {
			for (const m of readFileSync(file, 'utf8').matchAll(/export (?:const|async function) (GET|POST|PUT|PATCH|DELETE)\b/g)) keys.add(`${m[1]} ${route}`);
		}
	}
	return [...keys].sort();
}

const baseURL = `http://127.0.0.1:${process.env.E2E_PORT ?? 4174}`;
/** A revision id that no team has: actions refuse by role first, then answer 404. */
const NO_SUCH_ID = '2000000000';

let db: mysql.Connection;
let revId = 0;
const ctx: Partial<Record<Who, APIRequestContext>> = {};
const figures = { routes: 0, cells: 0, refusals: 0, badInputs: 0 };

async function signedIn(email: string): Promise<APIRequestContext> {
	const c = await pwRequest.newContext({ baseURL });
	const res = await c.post('/sign-in', { form: { email, password: DEMO_PASSWORD }, headers: { origin: baseURL }, maxRedirects: 0 });
	// Without an HTML Accept header SvelteKit answers an action's redirect as JSON.
	const redirected = res.status() === 303 || ((await res.json().catch(() => ({}))) as { type?: string }).type === 'redirect';
	expect(redirected, `sign-in as ${email}`).toBe(true);
	return c;
}


test.beforeAll(async () => {
	db = await mysql.createConnection({ uri: process.env.DATABASE_URL! });
	const [rows] = await db.query<mysql.RowDataPacket[]>(
		"SELECT r.id FROM revision r JOIN part pa ON pa.id = r.part_id JOIN project p ON p.id = pa.project_id WHERE p.slug = 'sensor-pods' ORDER BY r.id LIMIT 1"
	);
	revId = rows[0].id;
	for (const w of ALL) ctx[w] = await signedIn(`${w}@example.test`);
	ctx.visitor = await pwRequest.newContext({ baseURL });
});

test.afterAll(async () => {
	console.log(`[access] ${figures.routes} routes × ${WHO.length} identities = ${figures.cells} checks, ${figures.refusals} refusals as expected; ${figures.badInputs} bad inputs answered with a 4xx`);
	for (const c of Object.values(ctx)) await c?.dispose();
	await db?.end();
});

function concrete(route: string, forAction: boolean): string {
	return route
		.replace('[slug]', forAction ? 'no-such-project' : 'sensor-pods')
		.replace('[project]', 'sensor-pods')
		.replace('[part]', 'side-scan-pod')
		.replace('[run]', 'no-such-run')
		.replace('[id]', forAction ? NO_SUCH_ID : String(revId))
		.replace('[token]', 'not-a-real-token');
}

/** Valid-looking bodies, so an allowed role gets past validation to the role check (or a 404). */
const ACTION_FORMS: Record<string, Record<string, string>> = {
	comment: { body: 'Fillet looks thin near the nose.' },
	return: { reason: 'Close the hole at the tail.' },
	signOff: { note: 'ok' },
	repair: { steps: '[]', name: 'x' },
	bulk: { action: 'sign-off', revisionIds: NO_SUCH_ID }
};

interface Outcome {
	status: number;
	location: string | null;
}

async function attempt(key: string, who: Who): Promise<Outcome> {
	const c = ctx[who]!;
	const [kind, rest] = [key.slice(0, key.indexOf(' ')), key.slice(key.indexOf(' ') + 1)];
	let res: APIResponse;
	if (kind === 'page') res = await c.get(concrete(rest, false), { maxRedirects: 0 });
	else if (kind === 'action') {
		const [route, name] = rest.split('?/');
		const url = concrete(route, true) + (name === 'default' ? '' : `?/${name}`);
		res = await c.post(url, { form: ACTION_FORMS[name] ?? {}, headers: { origin: baseURL, 'x-sveltekit-action': 'true', accept: 'application/json' }, maxRedirects: 0 });
		if (res.headers()['content-type']?.includes('application/json')) {
			const j = (await res.json()) as { type?: string; status?: number; location?: string };
			return { status: j.status ?? res.status(), location: j.location ?? null };
		}
	} else if (kind === 'GET') res = await c.get(concrete(rest, false), { maxRedirects: 0 });
	// An override without a reason is refused (400) after the role check and before anything is written.
	else if (rest.includes('/sign-off')) res = await c.post(concrete(rest, true), { data: { override: 1 }, maxRedirects: 0 });
	else if (rest.includes('/queue/bulk')) res = await c.post(concrete(rest, true), { data: { action: 'sign-off', revisionIds: [Number(NO_SUCH_ID)] }, maxRedirects: 0 });
	else if (rest.includes('/comments')) res = await c.post(concrete(rest, true), { data: { body: 'Looks thin here.' }, maxRedirects: 0 });
	// The upload route: a JSON body is refused as the wrong kind (415) by a role that may upload.
	else res = await c.fetch(concrete(rest, false), { method: kind, data: { x: 1 }, maxRedirects: 0 });
	return { status: res.status(), location: res.headers()['location'] ?? null };
}

const isRefusal = (o: Outcome) => o.status === 401 || o.status === 403 || (o.status >= 300 && o.status < 400 && !!o.location?.startsWith('/sign-in'));

test('every route under src/routes has an access entry, and no entry is stale', () => {
	const found = discoverRoutes();
	expect(found.filter((k) => !(k in ACCESS)), 'routes with no entry in ACCESS (decide who may use them)').toEqual([]);
	expect(Object.keys(ACCESS).filter((k) => !found.includes(k)), 'entries for routes that no longer exist').toEqual([]);
});

test('each role and a signed-out visitor reach exactly the routes the table allows', async () => {
	test.setTimeout(180_000);
	const wrong: string[] = [];
	const keys = discoverRoutes().filter((k) => k in ACCESS && k !== 'action /sign-out?/default');
	for (const key of keys) {
		const rule = ACCESS[key];
		for (const who of WHO) {
			const allowed = rule === 'public' || rule.includes(who);
			const o = await attempt(key, who);
			figures.cells++;
			if (o.status >= 500) wrong.push(`${key} as ${who}: ${o.status}`);
			else if (isRefusal(o) === allowed) wrong.push(`${key} as ${who}: ${allowed ? 'refused' : 'allowed'} (${o.status}${o.location ? ' → ' + o.location : ''})`);
			else if (!allowed) figures.refusals++;
		}
		figures.routes++;
	}
	// Signing out, last, with throwaway sessions so the shared ones stay signed in.
	for (const who of WHO) {
		const c = who === 'visitor' ? ctx.visitor! : await signedIn(`${who}@example.test`);
		const res = await c.post('/sign-out', { form: {}, headers: { origin: baseURL }, maxRedirects: 0 });
		if (res.status() >= 400) wrong.push(`sign-out as ${who}: ${res.status()}`);
		figures.cells++;
		if (who !== 'visitor') await c.dispose();
	}
	figures.routes++;
	expect(wrong).toEqual([]);
});

test('a form post from a foreign origin is refused with 403', async () => {
	for (const [who, url, form] of [
		['visitor', '/sign-in', { email: 'designer@example.test', password: DEMO_PASSWORD }],
		['designer', '/settings?/create', { name: 'stolen' }],
		['reviewer', `/revisions/${revId}?/comment`, { body: 'forged' }]
	] as const) {
		const res = await ctx[who]!.post(url, { form, headers: { origin: 'https://evil.example' }, maxRedirects: 0 });
		expect(res.status(), `${url} from evil.example`).toBe(403);
		figures.refusals++;
	}
});

test('the session cookie is HttpOnly and SameSite=Lax, and not Secure over plain http', async () => {
	const c = await pwRequest.newContext({ baseURL });
	const res = await c.post('/sign-in', { form: { email: 'reviewer@example.test', password: DEMO_PASSWORD }, headers: { origin: baseURL }, maxRedirects: 0 });
	const cookie = res.headersArray().find((h) => h.name.toLowerCase() === 'set-cookie' && h.value.startsWith('shellgate_session='))!.value;
	expect(cookie).toMatch(/;\s*HttpOnly/i);
	expect(cookie).toMatch(/;\s*SameSite=Lax/i);
	expect(cookie).not.toMatch(/;\s*Secure/i);
	expect(cookie).toMatch(/;\s*Path=\//i);
	await c.dispose();
});

test('a revoked API token stops working at once, and no answer shows a token or a password hash', async () => {
	const designer = ctx.designer!;
	const res = await designer.post('/settings?/create', { form: { name: 'access-test pipeline' }, headers: { origin: baseURL, 'x-sveltekit-action': 'true', accept: 'application/json' } });
	const body = (await res.json()) as { type: string; data: string };
	expect(body.type).toBe('success');
	const token = (devalueParse(body.data) as { newToken: string }).newToken;
	expect(token).toMatch(/^sg_/);
	const bearer = await pwRequest.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${token}` } });
	const answers: string[] = [];
	for (const url of ['/api/v1/queue', `/api/v1/revisions/${revId}`]) {
		const r = await bearer.get(url);
		expect(r.status(), url).toBe(200);
		answers.push(await r.text());
	}
	answers.push(await (await designer.get('/settings')).text());
	const [[row]] = await db.query<mysql.RowDataPacket[]>('SELECT id FROM api_token WHERE prefix = ? ORDER BY id DESC LIMIT 1', [token.slice(0, 10)]);
	// The first post only asks; the token still works until the revoke is confirmed.
	const ask = await designer.post('/settings?/revoke', { form: { id: String(row.id) }, headers: { origin: baseURL, 'x-sveltekit-action': 'true', accept: 'application/json' } });
	expect(((await ask.json()) as { type: string }).type).toBe('success');
	expect((await bearer.get('/api/v1/queue')).status()).toBe(200);
	const rv = await designer.post('/settings?/revoke', { form: { id: String(row.id), confirm: 'yes' }, headers: { origin: baseURL, 'x-sveltekit-action': 'true', accept: 'application/json' } });
	expect(((await rv.json()) as { type: string }).type).toBe('success');
	const after = await bearer.get('/api/v1/queue');
	expect(after.status()).toBe(401);
	expect(((await after.json()) as { message: string }).message).toMatch(/API token was revoked/);
	figures.refusals++;
	const [audits] = await db.query<mysql.RowDataPacket[]>('SELECT CAST(detail AS CHAR) AS d FROM audit_event');
	answers.push(...audits.map((a) => String(a.d)));
	for (const a of answers) {
		expect(a).not.toContain(token);
		expect(a).not.toContain(token.slice(3));
		expect(a).not.toMatch(/\$argon2/);
		expect(a).not.toContain(DEMO_PASSWORD);
		expect(a).not.toMatch(/password_?hash|tokenHash/i);
	}
	await bearer.dispose();
});

test('a stored file is served as an attachment with a neutral content type', async () => {
	const res = await ctx.reviewer!.get(`/api/v1/revisions/${revId}/file`);
	expect(res.status()).toBe(200);
	const h = res.headers();
	expect(h['content-type']).toBe('application/octet-stream');
	expect(h['content-disposition']).toMatch(/^attachment;/);
	expect(h['x-content-type-options']).toBe('nosniff');
});

test("a user of another team never sees this team's projects, revisions or files", async () => {
	const [[designer]] = await db.query<mysql.RowDataPacket[]>("SELECT password_hash FROM user WHERE email = 'designer@example.test'");
	const [t] = await db.query<mysql.ResultSetHeader>("INSERT INTO team (name) VALUES ('Harbour Outsiders')");
	const id = `outsider${Date.now().toString(36)}`.slice(0, 32);
	const email = `${id}@other.test`;
	await db.query('INSERT INTO user (id, email, name, team_id, password_hash) VALUES (?, ?, ?, ?, ?)', [id, email, 'Otto Outsider', t.insertId, designer.password_hash]);
	for (const role of ['engineer', 'designer', 'reviewer']) await db.query('INSERT INTO user_role (user_id, role) VALUES (?, ?)', [id, role]);
	const out = await signedIn(email);
	const checks: [string, () => Promise<APIResponse>, number[]][] = [
		['project page', () => out.get('/projects/sensor-pods', { maxRedirects: 0 }), [404]],
		['revision page', () => out.get(`/revisions/${revId}`, { maxRedirects: 0 }), [404]],
		['clearance page', () => out.get(`/revisions/${revId}/clearance`, { maxRedirects: 0 }), [404]],
		['revision API', () => out.get(`/api/v1/revisions/${revId}`), [404]],
		['file API', () => out.get(`/api/v1/revisions/${revId}/file`), [404]],
		['export API', () => out.get(`/api/v1/revisions/${revId}/export`), [404]],
		['comment API', () => out.post(`/api/v1/revisions/${revId}/comments`, { data: { body: 'peek' } }), [404]],
		['upload API', () => out.post('/api/v1/projects/sensor-pods/parts/side-scan-pod/revisions', { headers: { origin: baseURL }, multipart: { file: { name: 'x.stl', mimeType: 'application/octet-stream', buffer: readFileSync('fixtures/cube-closed.stl') } } }), [404]],
		['recheck action', () => out.post(`/revisions/${revId}?/recheck`, { form: {}, headers: { origin: baseURL, 'x-sveltekit-action': 'true', accept: 'application/json' }, maxRedirects: 0 }), [404]]
	];
	for (const [what, run, statuses] of checks) {
		const r = await run();
		// Form actions answer JSON with the status inside.
		const status = r.headers()['content-type']?.includes('json') ? (((await r.json()) as { status?: number }).status ?? r.status()) : r.status();
		expect(statuses, `${what} as another team's user: ${status}`).toContain(status);
		figures.refusals++;
	}
	const queue = (await (await out.get('/api/v1/queue')).json()) as { rows?: unknown[]; total?: number };
	expect(JSON.stringify(queue)).not.toMatch(/sensor-pods|Sensor-pod/);
	const projects = await (await out.get('/projects')).text();
	expect(projects).not.toContain('Sensor-pod housings');
	const upload = await (await out.get('/upload')).text();
	expect(upload).not.toContain('Sensor-pod housings');
	await out.dispose();
	const [after] = await db.query<mysql.RowDataPacket[]>("SELECT COUNT(*) AS n FROM revision WHERE file_name = 'x.stl' AND uploader_id = ?", [id]);
	expect(Number(after[0].n)).toBe(0);
});

test('wrong types, missing fields, over-long strings and unknown ids get a 4xx with a message, never a 500', async () => {
	const eng = ctx.engineer!;
	const long = 'x'.repeat(100_000);
	const api: [string, () => Promise<APIResponse>][] = [
		['revision id not a number', () => eng.get('/api/v1/revisions/abc')],
		['revision id too long', () => eng.get('/api/v1/revisions/99999999999999999999')],
		['unknown revision', () => eng.get(`/api/v1/revisions/${NO_SUCH_ID}`)],
		['negative id', () => eng.get('/api/v1/revisions/-1/file')],
		['comment not JSON', () => eng.post(`/api/v1/revisions/${revId}/comments`, { data: 'not json', headers: { 'content-type': 'application/json' } })],
		['comment body a number', () => eng.post(`/api/v1/revisions/${revId}/comments`, { data: { body: 42 } })],
		['comment missing body', () => eng.post(`/api/v1/revisions/${revId}/comments`, { data: {} })],
		['comment point wrong shape', () => eng.post(`/api/v1/revisions/${revId}/comments`, { data: { body: 'x', point: ['a', null] } })],
		['comment 100k characters', () => eng.post(`/api/v1/revisions/${revId}/comments`, { data: { body: long } })],
		['comment JSON array', () => eng.post(`/api/v1/revisions/${revId}/comments`, { data: [1, 2, 3] })],
		['bulk not JSON', () => eng.post('/api/v1/queue/bulk', { data: 'not json', headers: { 'content-type': 'application/json' } })],
		['bulk unknown action', () => eng.post('/api/v1/queue/bulk', { data: { action: 'delete', revisionIds: [1] } })],
		['bulk ids not numbers', () => eng.post('/api/v1/queue/bulk', { data: { action: 'recheck', revisionIds: ['a'] } })],
		['bulk 100k ids', () => eng.post('/api/v1/queue/bulk', { data: { action: 'recheck', revisionIds: Array.from({ length: 100_000 }, (_, i) => i + 1) } })],
		['bulk return without reason', () => eng.post('/api/v1/queue/bulk', { data: { action: 'return', revisionIds: [1] } })],
		['queue with bad filters', () => eng.get('/api/v1/queue?page=-5&pageSize=1e9&sort=;drop&dir=sideways&status=nope&project=' + long.slice(0, 3000))],
		['upload with no file field', () => eng.post('/api/v1/projects/sensor-pods/parts/side-scan-pod/revisions', { headers: { origin: baseURL }, multipart: { note: 'no file' } })],
		['upload to unknown project', () => eng.post('/api/v1/projects/no-such/parts/x/revisions', { headers: { origin: baseURL }, multipart: { file: { name: 'x.stl', mimeType: 'application/octet-stream', buffer: readFileSync('fixtures/cube-closed.stl') } } })],
		['upload with bad part slug', () => eng.post('/api/v1/projects/sensor-pods/parts/BAD%20SLUG!/revisions', { headers: { origin: baseURL }, multipart: { file: { name: 'x.stl', mimeType: 'application/octet-stream', buffer: readFileSync('fixtures/cube-closed.stl') } } })],
		['upload HTML as .stl', () => eng.post('/api/v1/projects/sensor-pods/parts/side-scan-pod/revisions', { headers: { origin: baseURL }, multipart: { file: { name: 'x.stl', mimeType: 'text/html', buffer: Buffer.from('<html><script>alert(1)</script></html>') } } })],
		['upload over-long note', () => eng.post('/api/v1/projects/sensor-pods/parts/side-scan-pod/revisions', { headers: { origin: baseURL }, multipart: { note: long, file: { name: 'x.stl', mimeType: 'application/octet-stream', buffer: Buffer.from('<html>') } } })],
		['export unknown format', () => eng.get(`/api/v1/revisions/${revId}/export?format=%00%ff`)],
		['export format an inherited key', () => eng.get(`/api/v1/revisions/${revId}/export?format=constructor`)],
		['export format another inherited key', () => eng.get(`/api/v1/revisions/${revId}/export?format=__proto__`)]
	];
	const wrong: string[] = [];
	for (const [what, run] of api) {
		const r = await run();
		const text = await r.text();
		let message = '';
		try {
			message = (JSON.parse(text) as { message?: string }).message ?? '';
		} catch {
			/* not JSON */
		}
		if (!(r.status() >= 400 && r.status() < 500 && message)) wrong.push(`${what}: ${r.status()} ${text.slice(0, 120)}`);
		else if (what.startsWith('export') && r.status() !== 400) wrong.push(`${what}: ${r.status()}, not 400`);
		figures.badInputs++;
	}
	const forms: [string, string, Record<string, string>][] = [
		['token name over-long', '/settings?/create', { name: long.slice(0, 5000) }],
		['token name missing', '/settings?/create', {}],
		['revoke id not a number', '/settings?/revoke', { id: 'abc' }],
		['revoke unknown id', '/settings?/revoke', { id: '2147483647' }],
		['comment 100k characters', `/revisions/${revId}?/comment`, { body: long }],
		['comment point not JSON', `/revisions/${revId}?/comment`, { body: 'x', point: '{not json' }],
		['comment face a word', `/revisions/${revId}?/comment`, { body: 'x', face: 'left' }],
		['return without reason', `/revisions/${revId}?/return`, {}],
		['repair steps not JSON', `/revisions/${revId}?/repair`, { steps: '][' }],
		['repair steps wrong type', `/revisions/${revId}?/repair`, { steps: '{"op": 5}' }],
		['bulk ids not numbers', '/queue?/bulk', { action: 'assign', revisionIds: 'a,b', assignee: 'nobody' }],
		['bulk return without reason', '/queue?/bulk', { action: 'return', revisionIds: '1' }],
		['action on unknown revision', `/revisions/${NO_SUCH_ID}?/recheck`, {}]
	];
	for (const [what, url, form] of forms) {
		const r = await eng.post(url, { form, headers: { origin: baseURL, 'x-sveltekit-action': 'true', accept: 'application/json' }, maxRedirects: 0 });
		const j = (await r.json().catch(() => ({}))) as { type?: string; status?: number };
		const status = j.status ?? r.status();
		if (!(r.status() < 500 && (j.type === 'failure' || j.type === 'error') && status >= 400 && status < 500)) wrong.push(`${what}: HTTP ${r.status()}, ${JSON.stringify(j).slice(0, 160)}`);
		figures.badInputs++;
	}
	expect(wrong).toEqual([]);
});
