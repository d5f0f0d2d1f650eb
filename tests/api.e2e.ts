import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { signInAs } from './helpers';

test('a pipeline token uploads, follows the check, reads the report and file, comments, and stops working once revoked', async ({ page, playwright, baseURL }) => {
	test.setTimeout(90_000);
	await signInAs(page, 'engineer');
	await page.goto('/settings');
	await page.getByLabel('Name').fill('keel-bulb optimiser, run farm 2');
	await page.getByRole('button', { name: 'Create token' }).click();
	const token = (await page.getByTestId('new-token').textContent())!.trim();
	expect(token).toMatch(/^sg_[a-z0-9]+$/);

	const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${token}` } });
	const bytes = readFileSync('fixtures/cube-closed-binary-le.ply');
	const part = `bulb-api-${Date.now().toString(36)}`;
	const up = await api.post(`/api/v1/projects/keel-bulbs/parts/${part}/revisions?fileName=bulb.ply&note=run%2041`, {
		headers: { 'content-type': 'application/octet-stream' },
		data: bytes
	});
	expect(up.status()).toBe(201);
	const created = await up.json();
	expect(created.status).toBe('awaiting-check');
	expect(created.links.self).toBe(`/api/v1/revisions/${created.id}`);

	// The same bytes again are recognised, not stored twice.
	const again = await api.post(`/api/v1/projects/keel-bulbs/parts/${part}/revisions?fileName=bulb-copy.ply`, { headers: { 'content-type': 'application/octet-stream' }, data: bytes });
	expect(again.status()).toBe(200);
	expect((await again.json()).duplicateOf).toBe(created.id);

	let detail: { status: string; report: { faces: number; watertight: boolean } | null; rules: { rule: string; passed: boolean }[] } = { status: '', report: null, rules: [] };
	await expect(async () => {
		detail = await (await api.get(created.links.self)).json();
		expect(['clear', 'held']).toContain(detail.status);
	}).toPass({ timeout: 30_000 });
	expect(detail.status).toBe('clear');
	expect(detail.report!.faces).toBe(12);
	expect(detail.report!.watertight).toBe(true);
	expect(detail.rules.every((r) => r.passed)).toBe(true);

	const file = await api.get(created.links.file);
	expect(file.headers()['content-type']).toBe('application/octet-stream');
	expect(file.headers()['content-disposition']).toMatch(/^attachment; filename="bulb.ply"/);
	expect(Buffer.from(await file.body()).equals(bytes)).toBe(true);

	const c = await api.post(`/api/v1/revisions/${created.id}/comments`, { data: { body: 'Run 41 looks clean.', point: [0.5, 0.5, 1], face: 3 } });
	expect(c.status()).toBe(201);
	const bad = await api.post(`/api/v1/revisions/${created.id}/comments`, { data: { body: '', point: [0, 'x', 0] } });
	expect(bad.status()).toBe(400);
	expect((await bad.json()).message).toBeTruthy();

	const q = await (await api.get(`/api/v1/queue?project=keel-bulbs&status=clear`)).json();
	expect(q.rows.some((r: { id: number }) => r.id === created.id)).toBe(true);
	expect((await api.get('/api/v1/queue?sort=sideways')).status()).toBe(400);
	expect((await api.get('/api/v1/revisions/99999999')).status()).toBe(404);

	await page.goto('/settings');
	await page.getByRole('row').filter({ hasText: 'run farm 2' }).getByRole('button', { name: 'Revoke' }).click();
	// Revoking asks first; until confirmed the token still works.
	await expect(page.getByTestId('confirm-revoke')).toContainText('run farm 2');
	expect((await api.get(created.links.self)).status()).toBe(200);
	await page.getByRole('button', { name: 'Yes, revoke it' }).click();
	await expect(page.getByRole('row').filter({ hasText: 'run farm 2' })).toContainText('revoked');
	const refused = await api.get(created.links.self);
	expect(refused.status()).toBe(401);
	expect((await refused.json()).message).toMatch(/API token was revoked/);
	await api.dispose();
	const unknown = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: 'Bearer sg_notatoken' } });
	expect((await (await unknown.get('/api/v1/queue')).json()).message).toMatch(/not known to Shellgate/);
	await unknown.dispose();
});

test('a multipart upload with a bearer token needs no Origin header; cookie-authenticated form posts still do', async ({ page, playwright, baseURL }) => {
	await signInAs(page, 'designer');
	await page.context().grantPermissions(['clipboard-read', 'clipboard-write'], { origin: baseURL });
	await page.goto('/settings');
	await page.getByLabel('Name').fill('pod script, multipart');
	await page.getByRole('button', { name: 'Create token' }).click();
	const token = (await page.getByTestId('new-token').textContent())!.trim();
	await page.getByTestId('copy-token').click();
	await expect(page.getByTestId('copy-token')).toHaveText('Copied');
	expect(await page.evaluate(() => navigator.clipboard.readText())).toBe(token);

	const bytes = readFileSync('fixtures/cube-closed.stl');
	const part = `pod-mp-${Date.now().toString(36)}`;
	// Playwright's request context sends no Origin header, like curl or a pipeline's HTTP client.
	const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${token}` } });
	const up = await api.post(`/api/v1/projects/sensor-pods/parts/${part}/revisions`, { multipart: { file: { name: 'pod.stl', mimeType: 'model/stl', buffer: bytes } } });
	expect(up.status(), await up.text()).toBe(201);
	expect((await up.json()).links.self).toMatch(/^\/api\/v1\/revisions\/\d+$/);
	await api.dispose();

	// The same upload on the browser's session cookie, with no Origin: refused, as JSON.
	const cookies = await page.context().storageState();
	const viaCookie = await playwright.request.newContext({ baseURL, storageState: cookies });
	const cross = await viaCookie.post(`/api/v1/projects/sensor-pods/parts/${part}/revisions`, { multipart: { file: { name: 'pod2.stl', mimeType: 'model/stl', buffer: bytes } } });
	expect(cross.status()).toBe(403);
	expect((await cross.json()).message).toMatch(/Cross-site POST/);
	// A bearer header does not lift the check while a session cookie comes along.
	const both = await viaCookie.post(`/api/v1/projects/sensor-pods/parts/${part}/revisions`, { headers: { authorization: `Bearer ${token}` }, multipart: { file: { name: 'pod3.stl', mimeType: 'model/stl', buffer: bytes } } });
	expect(both.status()).toBe(403);
	// A page's form post from another origin is refused; from our own it goes through.
	const foreign = await viaCookie.post('/settings?/create', { form: { name: 'forged' }, headers: { origin: 'http://elsewhere.example', accept: 'application/json' } });
	expect(foreign.status()).toBe(403);
	const own = await viaCookie.post('/settings?/create', { form: { name: 'own origin' }, headers: { origin: baseURL!, 'x-sveltekit-action': 'true', accept: 'application/json' } });
	expect(((await own.json()) as { type: string }).type).toBe('success');
	await viaCookie.dispose();
});


