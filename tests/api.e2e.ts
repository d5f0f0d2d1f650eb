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
	await expect(page.getByRole('row').filter({ hasText: 'run farm 2' })).toContainText('revoked');
	expect((await api.get(created.links.self)).status()).toBe(401);
	await api.dispose();
});


