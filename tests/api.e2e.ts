import { readFileSync } from 'node:fs';
import http from 'node:http';
import net from 'node:net';
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

/**
 * Sends a chunked body (no Content-Length) on a raw socket without reading the answer meanwhile,
 * first `minBytes` and then for `keepSendingMs` more (as a client on a loaded machine goes on
 * sending before it notices the answer); then reads. Resolves with the status line and JSON body, or
 * with the socket error (a reset throws away an answer that was not read yet).
 */
function postChunked(url: string, headers: Record<string, string>, head: string, minBytes: number, keepSendingMs: number): Promise<{ status: number; body: string; error: string | null }> {
	const u = new URL(url);
	return new Promise((resolve) => {
		const s = net.connect(Number(u.port), u.hostname);
		let got = '';
		let done = false;
		const end = (error: string | null) => {
			if (done) return;
			done = true;
			s.destroy();
			const status = Number(/^HTTP\/1\.1 (\d{3})/.exec(got)?.[1] ?? 0);
			resolve({ status, body: got.slice(got.indexOf('\r\n\r\n') + 4), error });
		};
		s.on('data', (d) => {
			got += d.toString('latin1');
			const split = got.indexOf('\r\n\r\n');
			const len = Number(/content-length: (\d+)/i.exec(got)?.[1] ?? NaN);
			if (split > 0 && got.length - split - 4 >= len) end(null);
		});
		s.on('error', (e) => end((e as NodeJS.ErrnoException).code ?? String(e)));
		s.on('close', () => end('closed before the answer'));
		s.pause();
		const lines = Object.entries({ host: u.host, ...headers, 'transfer-encoding': 'chunked' }).map(([k, v]) => `${k}: ${v}`);
		s.write(`POST ${u.pathname}${u.search} HTTP/1.1\r\n${lines.join('\r\n')}\r\n\r\n`);
		const frame = (b: Buffer) => Buffer.concat([Buffer.from(`${b.length.toString(16)}\r\n`), b, Buffer.from('\r\n')]);
		if (head) s.write(frame(Buffer.from(head)));
		const chunk = frame(Buffer.alloc(1024 * 1024, 0x20));
		let sent = 0;
		let until = 0;
		const pump = () => {
			while (!done) {
				if (sent >= minBytes) {
					until ||= Date.now() + keepSendingMs;
					if (Date.now() >= until) break;
				}
				sent += chunk.length;
				if (!s.write(chunk)) return void s.once('drain', pump);
			}
			s.resume();
		};
		pump();
	});
}

test('an over-limit upload sent chunked, without Content-Length, gets the 413 JSON answer, not a reset (raw and multipart)', async ({ page, baseURL }) => {
	test.setTimeout(180_000);
	await signInAs(page, 'engineer');
	await page.goto('/settings');
	await page.getByLabel('Name').fill('chunked limit probe');
	await page.getByRole('button', { name: 'Create token' }).click();
	const token = (await page.getByTestId('new-token').textContent())!.trim();
	const auth = { authorization: `Bearer ${token}` };
	const rawUrl = `${baseURL}/api/v1/projects/keel-bulbs/parts/chunked-probe/revisions?fileName=big.stl`;
	const multipartHead = '--probe\r\ncontent-disposition: form-data; name="file"; filename="big.stl"\r\ncontent-type: application/octet-stream\r\n\r\n';
	// The app's limit in this run (UPLOAD_LIMIT_MB, 512 unless set): the client sends past it, then
	// goes on for 2 s before it reads. A server that cuts the connection meanwhile resets it.
	const limit = Number(process.env.UPLOAD_LIMIT_MB ?? 512) * 1024 * 1024;
	for (const [what, url, headers, head] of [
		['raw', rawUrl, { ...auth, 'content-type': 'application/octet-stream' }, ''],
		['multipart', rawUrl.replace(/\?.*/, ''), { ...auth, origin: baseURL!, 'content-type': 'multipart/form-data; boundary=probe' }, multipartHead]
	] as const) {
		const res = await postChunked(url, headers, head, limit + 2 * 1024 * 1024, 2000);
		expect(res.error, what).toBeNull();
		expect(res.status, what).toBe(413);
		expect(JSON.parse(res.body).message, what).toMatch(/larger than the upload limit/i);
	}

	// With Content-Length the same refusal comes before a byte of the body is sent.
	const declared = await new Promise<{ status: number; body: string }>((resolve, reject) => {
		const req = http.request(rawUrl, { method: 'POST', headers: { ...auth, 'content-type': 'application/octet-stream', 'content-length': String(limit + 10 * 1024 * 1024) } }, (res) => {
			let body = '';
			res.setEncoding('utf8');
			res.on('data', (c: string) => (body += c));
			res.on('end', () => {
				req.destroy();
				resolve({ status: res.statusCode ?? 0, body });
			});
		});
		req.on('error', reject);
		req.flushHeaders();
	});
	expect(declared.status).toBe(413);
	expect(JSON.parse(declared.body).message).toMatch(/larger than the upload limit/i);
});
