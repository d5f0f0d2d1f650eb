import { expect, test } from '@playwright/test';
import { icosphere, torus } from '../src/lib/mesh/testing/test-meshes';
import { writeBinaryStl } from '../src/lib/mesh/write';
import { shot, signInAs, signOut } from './helpers';

// Thirty iterations of one keel bulb from an optimiser: a sphere growing slowly (genus 0) until
// iteration CHANGE_AT, where the optimiser punches a hole through it (a torus, genus 1). The keel
// bulbs project expects genus 0, so the iterations from CHANGE_AT on are held.
const ITERATIONS = 30;
const CHANGE_AT = 17;
function iterationMesh(i: number): Uint8Array {
	return i < CHANGE_AT ? writeBinaryStl(icosphere(3, 0.2 + 0.002 * i)) : writeBinaryStl(torus(40, 14, 0.2, 0.07 + 0.001 * i));
}

test('a run of 30 iterations through the API: the run page counts them, marks the topology change and filters on a click; one digest mail', async ({ page, playwright, baseURL, browser }) => {
	test.setTimeout(240_000);
	const stamp = Date.now().toString(36);
	const runName = `bulb optimiser ${stamp}`;
	const partSlug = `bulb-opt-${stamp}`;

	await signInAs(page, 'designer');
	await page.goto('/settings');
	await page.getByLabel('Name').fill('bulb optimiser');
	await page.getByRole('button', { name: 'Create token' }).click();
	const token = (await page.getByTestId('new-token').textContent())!.trim();
	const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${token}` } });
	const runUrl = `/api/v1/projects/keel-bulbs/runs/${encodeURIComponent(runName)}/files`;
	const headers = (i: number) => ({
		'content-type': 'application/octet-stream',
		'x-shellgate-run-kind': 'iterations',
		'x-shellgate-part': partSlug,
		'x-shellgate-meta': JSON.stringify({ iteration: i, optimiser: { step: 0.002 } })
	});

	// Bad metadata: a JSON error, and nothing stored (the run is not even created).
	const bad = await api.post(`${runUrl}?fileName=it-bad.stl`, { headers: { ...headers(0), 'x-shellgate-meta': '{"iteration": 0,' }, data: Buffer.from(iterationMesh(0)) });
	expect(bad.status()).toBe(400);
	expect((await bad.json()).message).toMatch(/not valid JSON.*Nothing was stored/);

	// The first iteration creates the run and the part and says so.
	const first = await api.post(`${runUrl}?fileName=it-00.stl`, { headers: headers(0), data: Buffer.from(iterationMesh(0)) });
	expect(first.status()).toBe(201);
	const firstBody = await first.json();
	expect(firstBody).toMatchObject({ number: 1, iteration: 0, outcome: 'created-part', part: { slug: partSlug, created: true }, run: { name: runName, kind: 'iterations', created: true } });
	const runId: number = firstBody.run.id;

	// The rest four at a time and out of order, as a run farm sends them; the revision numbers follow arrival.
	const rest = Array.from({ length: ITERATIONS - 1 }, (_, k) => k + 1).sort((a, b) => ((a * 7) % 11) - ((b * 7) % 11) || a - b);
	for (let k = 0; k < rest.length; k += 4) {
		const answers = await Promise.all(
			rest.slice(k, k + 4).map((i) => api.post(`${runUrl}?fileName=it-${String(i).padStart(2, '0')}.stl`, { headers: headers(i), data: Buffer.from(iterationMesh(i)) }))
		);
		for (const a of answers) {
			expect(a.status()).toBe(201);
			expect(await a.json()).toMatchObject({ outcome: 'new-revision', run: { id: runId, created: false } });
		}
	}
	// The part route takes the run by header too; another part for an iterations run is refused.
	const other = await api.post(`/api/v1/projects/keel-bulbs/parts/other-${stamp}/revisions?fileName=x.stl`, { headers: { 'content-type': 'application/octet-stream', 'x-shellgate-run': runName }, data: Buffer.from(iterationMesh(3)) });
	expect(other.status()).toBe(409);
	expect((await other.json()).message).toMatch(/holds iterations of the part/);

	// Wait for every verdict.
	await expect(async () => {
		const s = await (await api.get(`/api/v1/runs/${runId}`)).json();
		expect(s.pending).toBe(0);
	}).toPass({ timeout: 180_000, intervals: [1000] });
	const summary = await (await api.get(`/api/v1/runs/${runId}`)).json();
	expect(summary).toMatchObject({ name: runName, kind: 'iterations', revisions: ITERATIONS, parts: 1, iterations: { min: 0, max: ITERATIONS - 1, count: ITERATIONS } });
	expect(summary.states.clear).toBe(CHANGE_AT);
	expect(summary.states.held).toBe(ITERATIONS - CHANGE_AT);
	await signOut(page);

	// The engineer reads the run page.
	await signInAs(page, 'engineer');
	await page.goto(`/runs/${runId}`);
	await expect(page.getByRole('heading', { name: `Run “${runName}”` })).toBeVisible();
	await expect(page.getByTestId('run-count').and(page.locator('[data-state="clear"]'))).toContainText(String(CHANGE_AT));
	await expect(page.getByTestId('run-count').and(page.locator('[data-state="held"]'))).toContainText(String(ITERATIONS - CHANGE_AT));
	const changes = page.getByTestId('topology-change');
	await expect(changes).toHaveCount(1);
	await expect(changes).toHaveAttribute('data-iteration', String(CHANGE_AT));
	await expect(page.getByTestId('topology-changes')).toContainText(`Iteration ${CHANGE_AT}: genus 0 → 1`);
	await expect(page.getByTestId('distance-point')).toHaveCount(ITERATIONS - 1);
	await expect(page.getByTestId('rule-pass-rates')).toContainText(`${CHANGE_AT} / ${ITERATIONS}`);
	await page.screenshot({ path: '/tmp/h13a-shots/run-page.png', fullPage: true });
	await page.getByTestId('run-iterations').screenshot({ path: '/tmp/h13a-shots/run-iterations.png' });
	await page.getByTestId('run-chart').first().locator('xpath=ancestor::section[1]').screenshot({ path: '/tmp/h13a-shots/run-distributions.png' });
	await page.screenshot({ path: shot('run-page'), fullPage: true });

	// The table lists the iterations in iteration order, whatever order they arrived in.
	const its = await page.getByTestId('run-row').evaluateAll((rows) => rows.map((r) => Number(r.getAttribute('data-iteration'))));
	expect(its).toEqual(Array.from({ length: ITERATIONS }, (_, i) => i));

	// A click on the genus-1 bar filters the table to the held iterations (an address the page can be reloaded on).
	await page.getByTestId('run-chart').and(page.locator('[data-measure="genus"]')).getByTestId('run-bar').nth(1).click();
	await expect(page).toHaveURL(/genus=1/);
	await expect(page.getByTestId('run-table-count')).toHaveText(`${ITERATIONS - CHANGE_AT} of ${ITERATIONS}`);
	await expect(page.getByTestId('run-row').first()).toHaveAttribute('data-iteration', String(CHANGE_AT));
	// A click on a point of the timeline: that one iteration.
	await page.getByTestId('run-filters').getByRole('link', { name: 'Clear all' }).click();
	await expect(page).toHaveURL(new RegExp(`/runs/${runId}$`));
	await expect(page.getByTestId('run-table-count')).toHaveText(`${ITERATIONS} of ${ITERATIONS}`);
	await page.getByRole('link', { name: `Iteration 5: genus 0, 1 shells; show it in the table` }).click();
	await expect(page.getByTestId('run-row')).toHaveCount(1);
	await expect(page.getByTestId('run-row')).toHaveAttribute('data-iteration', '5');
	await page.getByTestId('run-row').getByRole('link').click();
	await expect(page.getByTestId('revision-run-link')).toHaveText(`run “${runName}”`);

	// One digest mail for the run, and no mail of its own for any held iteration.
	const mailbox = await browser.newPage();
	await expect(async () => {
		await mailbox.goto('/dev/mailbox');
		await expect(mailbox.getByTestId('mail-subject').filter({ hasText: `Run "${runName}" checked` })).toHaveCount(1, { timeout: 500 });
	}).toPass({ timeout: 30_000 });
	const digest = mailbox.getByTestId('mail').filter({ hasText: `Run "${runName}" checked` });
	await expect(digest).toContainText(`${ITERATIONS} revisions, ${ITERATIONS - CHANGE_AT} held`);
	await expect(digest).toContainText(`(iteration ${CHANGE_AT}): Expected genus`);
	// Give a second digest time to appear if one wrongly would.
	await mailbox.waitForTimeout(4000);
	await mailbox.goto('/dev/mailbox');
	await expect(mailbox.getByTestId('mail-subject').filter({ hasText: `Run "${runName}"` })).toHaveCount(1);
	await expect(mailbox.getByTestId('mail').filter({ hasText: 'bulb opt ' + stamp }).getByTestId('mail-subject').filter({ hasText: /^Held: / })).toHaveCount(0);
});

test('the upload page asks how several files relate, names each part from its file for samples, and links the run', async ({ page }) => {
	test.setTimeout(120_000);
	const stamp = Date.now().toString(36);
	await signInAs(page, 'designer');
	await page.goto('/upload?project=keel-bulbs');
	const files = [0, 1, 2].map((i) => ({ name: `Bulb_${stamp}_${i}.stl`, mimeType: 'model/stl', buffer: Buffer.from(writeBinaryStl(icosphere(2, 0.2 + i / 50))) }));
	await page.getByLabel('Files').setInputFiles(files);
	// Several files: the question is asked and must be answered; nothing is sent before.
	await expect(page.getByTestId('batch-mode')).toContainText('How do these 3 files relate?');
	await page.getByRole('button', { name: 'Upload 3 files' }).click();
	await expect(page.getByTestId('batch-mode').getByRole('alert')).toContainText('Say how these files relate');
	await expect(page.getByTestId('upload-item').getByRole('link')).toHaveCount(0);
	await page.getByLabel('Generator run (optional)').fill(`bulb family ${stamp}`);
	await page.getByLabel('Each file its own part (samples of a family)').check();
	await expect(page.getByLabel('Part', { exact: true })).toBeDisabled();
	await page.getByRole('button', { name: 'Upload 3 files' }).click();
	await expect(page.getByTestId('upload-item').getByRole('link', { name: 'Open revision' })).toHaveCount(3);
	for (const i of [0, 1, 2]) await expect(page.getByTestId('upload-item').nth(i)).toContainText(`bulb-${stamp}-${i}: new part`);
	await page.screenshot({ path: shot('upload-run-samples'), fullPage: true });
	await page.getByTestId('upload-run-link').click();
	await expect(page.getByRole('heading', { name: `Run “bulb family ${stamp}”` })).toBeVisible();
	await expect(page.getByTestId('run-summary')).toContainText('Samples of a family · 3 revisions in 3 parts');
	await expect(page.getByTestId('run-iterations')).toHaveCount(0);

	// Iterations from the page: one part, numbered in file order.
	await page.goto('/upload?project=keel-bulbs');
	await page.getByLabel('Part', { exact: true }).fill(`bulb-page-${stamp}`);
	await page.getByLabel('Generator run (optional)').fill(`bulb page opt ${stamp}`);
	await page.getByLabel('Files').setInputFiles(files);
	await page.getByLabel('All files revisions of one part (iterations, in file order)').check();
	await page.getByRole('button', { name: 'Upload 3 files' }).click();
	await expect(page.getByTestId('upload-item').getByRole('link', { name: 'Open revision' })).toHaveCount(3);
	await expect(page.getByTestId('upload-item').nth(2)).toContainText(`bulb-page-${stamp}: new revision`);
	await page.getByTestId('upload-run-link').click();
	await expect(page.getByTestId('run-summary')).toContainText('Iterations of one design · 3 revisions in 1 part · iterations 1–3');
});

test('files chosen while the upload page is still starting are taken up once its script runs', async ({ page }) => {
	await signInAs(page, 'designer');
	// Hold the page's scripts back for a second, so the files are chosen before it is interactive.
	await page.route('**/_app/immutable/**/*.js', async (route) => {
		await new Promise((r) => setTimeout(r, 1000));
		await route.continue();
	});
	await page.goto('/upload?project=keel-bulbs', { waitUntil: 'commit' });
	const files = [0, 1].map((i) => ({ name: `Early_${i}.stl`, mimeType: 'model/stl', buffer: Buffer.from(writeBinaryStl(icosphere(1, 0.2 + i / 50))) }));
	await page.getByLabel('Files').setInputFiles(files);
	await expect(page.getByTestId('batch-mode')).toContainText('How do these 2 files relate?');
	await expect(page.getByRole('button', { name: 'Upload 2 files' })).toBeVisible();
});
