// The dataset hand-off from the project page: two revisions signed off and one left clear; the
// engineer downloads the CSV manifest from the page, and every row's sha256 matches the bytes behind
// its download link (hashed here with node:crypto), the two signed-off ones are in it and the clear
// one is not; the zip holds the signed-off files byte for byte.
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { expect, test, type Page } from '@playwright/test';
import { parse } from 'csv-parse/sync';
import { unzipSync } from 'fflate';
import { shot, signInAs, signOut } from './helpers';

const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

async function waitForVerdict(page: Page, id: number) {
	await expect(async () => {
		const d = await (await page.request.get(`/api/v1/revisions/${id}?report=0`)).json();
		expect(['clear', 'held', 'unreadable']).toContain(d.status);
	}).toPass({ timeout: 30_000 });
	return (await (await page.request.get(`/api/v1/revisions/${id}?report=0`)).json()).status as string;
}

test('the engineer downloads the CSV manifest from the project page: exactly the signed-off revisions, with sha256 values that match their files', async ({ page, baseURL }) => {
	const part = `dataset-pod-${Date.now().toString(36)}`;
	const base = readFileSync('fixtures/cube-closed-ascii.stl', 'utf8');
	// Three closed cubes with different bytes (trailing spaces), so three revisions of one part.
	const bytes = [1, 2, 3].map((k) => Buffer.from(base + ' '.repeat(k)));

	await signInAs(page, 'designer');
	const ids: number[] = [];
	for (const [k, b] of bytes.entries()) {
		const up = await page.request.post(`/api/v1/projects/sensor-pods/parts/${part}/revisions?fileName=pod-${k + 1}.stl`, {
			headers: { 'content-type': 'application/octet-stream', origin: baseURL! },
			data: b
		});
		expect(up.status()).toBe(201);
		ids.push((await up.json()).id);
	}
	for (const id of ids) expect(await waitForVerdict(page, id)).toBe('clear');
	await signOut(page);

	await signInAs(page, 'reviewer');
	for (const id of ids.slice(0, 2)) {
		const r = await page.request.post(`/api/v1/revisions/${id}/sign-off`, { headers: { origin: baseURL! }, data: { note: 'Cleared for the pod batch.' } });
		expect(r.status()).toBe(201);
	}
	await signOut(page);

	await signInAs(page, 'engineer');
	await page.goto('/projects/sensor-pods');
	const box = page.getByTestId('dataset-export');
	await expect(box).toContainText('not a structural');
	const count = Number(await box.getByTestId('dataset-count').textContent());
	expect(count).toBeGreaterThanOrEqual(2);
	await box.scrollIntoViewIfNeeded();
	await page.screenshot({ path: shot('project-dataset'), fullPage: true });

	const [download] = await Promise.all([page.waitForEvent('download'), box.getByRole('link', { name: 'Manifest (CSV)' }).click()]);
	expect(download.suggestedFilename()).toBe('sensor-pods-dataset.csv');
	const rows = parse(readFileSync((await download.path())!), { columns: true }) as Record<string, string>[];
	expect(rows).toHaveLength(count);

	// Ours: the two signed-off revisions, not the clear one.
	const ours = rows.filter((r) => r.part === part);
	expect(ours.map((r) => Number(r.revision_id)).sort((a, b) => a - b)).toEqual(ids.slice(0, 2));
	for (const r of ours) {
		expect(r.file_sha256).toBe(sha(bytes[Number(r.revision) - 1]));
		expect(r.signed_off_by_email).toBe('reviewer@example.test');
		expect(r.rule_closed).toBe('passed');
	}
	// Every row: the sha256 in the manifest is the sha256 of the bytes behind its download link.
	for (const r of rows) {
		expect(r.download_url).toBe(`${baseURL}/api/v1/revisions/${r.revision_id}/file`);
		const file = await page.request.get(r.download_url);
		expect(file.status()).toBe(200);
		expect(sha(await file.body()), `revision ${r.revision_id}`).toBe(r.file_sha256);
	}

	// The zip of the same project holds those files byte for byte, with the manifests.
	const zip = await page.request.get('/api/v1/projects/sensor-pods/dataset?format=zip');
	expect(zip.headers()['content-type']).toBe('application/zip');
	const files = unzipSync(new Uint8Array(await zip.body()));
	expect(Object.keys(files).sort()).toEqual([...rows.map((r) => r.zip_path), 'manifest.csv', 'manifest.jsonl'].sort());
	for (const r of ours) expect(Buffer.from(files[r.zip_path]).equals(bytes[Number(r.revision) - 1])).toBe(true);

	// An unknown format is refused as JSON.
	const bad = await page.request.get('/api/v1/projects/sensor-pods/dataset?format=xlsx');
	expect(bad.status()).toBe(400);
	expect((await bad.json()).message).toMatch(/use csv, jsonl or zip/);
});
