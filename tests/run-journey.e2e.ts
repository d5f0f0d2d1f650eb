// One generator run from upload to dataset, as the issue asks to see it: a family of 30 sensor-pod
// housings sent through the API with iteration metadata (all at once, out of order); the run page
// counts them and marks the one topology change (genus 0 → 1 where the generator starts cutting a
// cable duct through the pod); the reviewer and the engineer repair the held ones (the engineer from
// the run page, in one go), and the repairs land in the same run; one digest per person for the
// uploads and one per person for the repairs, none per revision; the reviewer follows the digest to
// the queue filtered by the run and signs the proposals off in bulk, and the ones the reviewer ran
// are refused and listed; the run's CSV manifest lists exactly the signed-off revisions, with sha256
// values that match the files behind their links (hashed here with node:crypto, the outside
// reference), and the run's zip holds exactly those files byte for byte.
import { createHash } from 'node:crypto';
import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import { parse } from 'csv-parse/sync';
import { unzipSync } from 'fflate';
import { icosphere, torus, withoutFaces } from '../src/lib/mesh/testing/test-meshes';
import { writeBinaryStl } from '../src/lib/mesh/write';
import { setAlsoRole, shot, signInAs, signOut } from './helpers';

const SAMPLES = 30;
/** From this iteration on the generator cuts a duct through the pod: a torus, genus 1. */
const DUCT_FROM = 17;
/** Iterations the generator left a triangle out of (an open surface: held, and the standard repair fills it). */
const OPEN = [4, 9, 13, 20, 24, 28];
/** The two of them the reviewer (also an engineer here) repairs; the engineer repairs the rest from the run page. */
const BY_REVIEWER = [4, 20];
/** Clear originals the reviewer signs off through the API, besides the repairs. */
const CLEAR_SIGNED = [0, 5, 16, 17, 29];

const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

/**
 * A pod housing in mm (the sensor-pods project, 2 mm cells): a sphere, later a ring; open at the OPEN
 * iterations. Fine enough (edges about 2 mm) that the filled triangle stays within the repair limit of
 * half a cell from the original surface.
 */
function podMesh(i: number): Buffer {
	const m = i < DUCT_FROM ? icosphere(4, 30 + 0.2 * i) : torus(120, 40, 36 + 0.2 * i, 12);
	return Buffer.from(writeBinaryStl(OPEN.includes(i) ? withoutFaces(m, [7]) : m));
}

async function runSummary(api: APIRequestContext, id: number) {
	return (await (await api.get(`/api/v1/runs/${id}`)).json()) as { revisions: number; pending: number; states: Record<string, number> };
}

/** The digests of this run in the mail catcher, by recipient. */
async function digests(mailbox: Page, runName: string) {
	await mailbox.goto('/dev/mailbox');
	const out: { to: string; subject: string; text: string }[] = [];
	for (const m of await mailbox.getByTestId('mail').filter({ has: mailbox.getByTestId('mail-subject').filter({ hasText: `Run "${runName}"` }) }).all()) {
		out.push({ to: (await m.getByTestId('mail-to').textContent())!, subject: (await m.getByTestId('mail-subject').textContent())!, text: (await m.textContent())! });
	}
	return out;
}

test('a generator run from upload to dataset: counts and topology change, repairs in the run, one digest per person, bulk sign-off with four-eyes refusals, manifest and zip of exactly the cleared files', async ({ page, browser, playwright, baseURL }) => {
	test.setTimeout(150_000);
	const stamp = Date.now().toString(36);
	const runName = `pod family ${stamp}`;
	const fileOf = (i: number) => `Pod_${stamp}_${String(i).padStart(2, '0')}.stl`;
	const partOf = (i: number) => `pod-${stamp}-${String(i).padStart(2, '0')}`;
	const bytes = Array.from({ length: SAMPLES }, (_, i) => podMesh(i));

	await setAlsoRole(page, 'reviewer', 'engineer', true);
	try {
		// The designer's generator sends the 30 samples at once, in a shuffled order, each with its iteration.
		await signInAs(page, 'designer');
		await page.goto('/settings');
		await page.getByLabel('Name').fill(`pod generator ${stamp}`);
		await page.getByRole('button', { name: 'Create token' }).click();
		const token = (await page.getByTestId('new-token').textContent())!.trim();
		await signOut(page);
		const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${token}` } });
		const order = Array.from({ length: SAMPLES }, (_, i) => i).sort((a, b) => ((a * 11) % 17) - ((b * 11) % 17) || b - a);
		const answers = await Promise.all(
			order.map((i) =>
				api.post(`/api/v1/projects/sensor-pods/runs/${encodeURIComponent(runName)}/files?fileName=${fileOf(i)}`, {
					headers: { 'content-type': 'application/octet-stream', 'x-shellgate-meta': JSON.stringify({ iteration: i, duct: i >= DUCT_FROM }) },
					data: bytes[i]
				})
			)
		);
		const revOf = new Map<number, number>();
		const runId: number = (await answers[0].json()).run.id;
		for (const [k, a] of answers.entries()) {
			expect(a.status(), await a.text()).toBe(201);
			const body = await a.json();
			expect(body).toMatchObject({ iteration: order[k], outcome: 'created-part', part: { slug: partOf(order[k]) }, run: { id: runId, name: runName, kind: 'samples' } });
			revOf.set(order[k], body.id);
		}
		await expect(async () => expect((await runSummary(api, runId)).pending).toBe(0)).toPass({ timeout: 60_000, intervals: [500] });
		const checked = await runSummary(api, runId);
		expect(checked.states).toMatchObject({ clear: SAMPLES - OPEN.length, held: OPEN.length });

		// The run page: the counts, and the one topology change at the iteration where the genus changes.
		await signInAs(page, 'reviewer');
		await page.goto(`/runs/${runId}`);
		await expect(page.getByTestId('run-count').and(page.locator('[data-state="clear"]'))).toContainText(String(SAMPLES - OPEN.length));
		await expect(page.getByTestId('run-count').and(page.locator('[data-state="held"]'))).toContainText(String(OPEN.length));
		await expect(page.getByTestId('topology-change')).toHaveCount(1);
		await expect(page.getByTestId('topology-change')).toHaveAttribute('data-iteration', String(DUCT_FROM));
		await expect(page.getByTestId('topology-changes')).toContainText(`Iteration ${DUCT_FROM}: genus 0 → 1`);

		// The uploads' digest reaches the designer (one mail for the 30).
		const mailbox = await browser.newPage();
		await expect(async () => expect((await digests(mailbox, runName)).filter((m) => m.to === 'designer@example.test')).toHaveLength(1)).toPass({ timeout: 30_000, intervals: [1000] });

		// The reviewer (an engineer too here) asks for the standard repair of two held samples from their pages, one
		// after the other; the run's digest waits while a repair of one of its revisions is under way.
		for (const i of BY_REVIEWER) {
			await page.goto(`/revisions/${revOf.get(i)}`);
			const asked = page.waitForResponse((r) => r.request().method() === 'POST' && r.url().includes('?/repair'));
			await page.getByRole('button', { name: 'Propose repair' }).click();
			expect((await asked).status()).toBe(200);
		}
		await expect(async () => {
			const s = await runSummary(api, runId);
			expect(s.states['repair-proposed']).toBe(BY_REVIEWER.length);
			expect(s.pending).toBe(0);
		}).toPass({ timeout: 30_000, intervals: [500] });
		await page.goto(`/runs/${runId}?state=repair-proposed`);
		await expect(page.getByTestId('run-row')).toHaveCount(BY_REVIEWER.length);
		await signOut(page);
		// One digest to the reviewer for those two, before the engineer goes on.
		await expect(async () => expect((await digests(mailbox, runName)).filter((m) => m.to === 'reviewer@example.test')).toHaveLength(1)).toPass({ timeout: 30_000, intervals: [1000] });

		// The engineer repairs the rest of the run's held samples in one go from the run page.
		await signInAs(page, 'engineer');
		await page.goto(`/runs/${runId}`);
		const rest = OPEN.length - BY_REVIEWER.length;
		await page.getByRole('button', { name: `Repair the ${rest} held revisions of this run` }).click();
		await expect(page.getByTestId('run-batch-message')).toHaveText(`${rest} repairs queued. Each becomes a new revision in this run, to review.`);
		await expect(async () => {
			const s = await runSummary(api, runId);
			expect(s.states['repair-proposed']).toBe(OPEN.length);
			expect(s.pending).toBe(0);
		}).toPass({ timeout: 60_000, intervals: [500] });
		await signOut(page);

		// One digest per person and batch, none per revision: the designer's for the uploads, the reviewer's for their own
		// two repairs and then for the engineer's four awaiting a sign-off, the engineer's for those four.
		await expect(async () => {
			const d = await digests(mailbox, runName);
			expect(d.filter((m) => m.to === 'reviewer@example.test')).toHaveLength(2);
			expect(d.filter((m) => m.to === 'engineer@example.test')).toHaveLength(1);
		}).toPass({ timeout: 30_000, intervals: [1000] });
		await mailbox.waitForTimeout(3000); // time for a wrong extra digest to show
		// Only the demo's three people are counted: other tests add reviewers to the team, and each reviewer gets the same digest.
		const mails = (await digests(mailbox, runName)).filter((m) => /^(designer|engineer|reviewer)@example\.test$/.test(m.to));
		const byTo = (who: string) => mails.filter((m) => m.to === `${who}@example.test`);
		expect(byTo('designer').map((m) => m.subject)).toEqual([`Run "${runName}" checked: ${SAMPLES} revisions, ${OPEN.length} held (Sensor-pod housings)`]);
		expect(byTo('designer')[0].text).toContain(`pod ${stamp} ${String(OPEN[0]).padStart(2, '0')} rev 1 (iteration ${OPEN[0]}): Closed surface`);
		expect(byTo('engineer').map((m) => m.subject)).toEqual([`Run "${runName}" checked: ${rest} revisions, 0 held (Sensor-pod housings)`]);
		const awaiting = byTo('reviewer').find((m) => /await your sign-off/.test(m.text))!;
		expect(awaiting.subject).toBe(`Run "${runName}": ${rest} repair proposals await your sign-off (Sensor-pod housings)`);
		expect(mails).toHaveLength(4);
		await mailbox.goto('/dev/mailbox');
		await expect(mailbox.getByTestId('mail').filter({ hasText: `pod ${stamp}` }).getByTestId('mail-subject').filter({ hasText: /^(Held|Repair awaits your sign-off): / })).toHaveCount(0);

		// The reviewer follows the digest's link to the queue filtered by the run and signs the six proposals off in bulk.
		await signInAs(page, 'reviewer');
		const link = new URL(awaiting.text.match(/https?:\/\/\S+\/queue\?run=\d+&status=repair-proposed/)![0]);
		await page.goto(link.pathname + link.search);
		await expect(page.getByTestId('run-filter')).toContainText(runName);
		const table = page.getByTestId('queue-table');
		await expect(table.getByTestId('queue-row')).toHaveCount(OPEN.length);
		await page.getByTestId('select-page').check();
		await expect(page.getByTestId('bulk-count')).toHaveText(`${OPEN.length} selected`);
		await page.getByLabel('Action', { exact: true }).selectOption('sign-off');
		await page.getByLabel('Note on each sign-off (optional)').fill('Cleared in bulk from the run digest.');
		await page.getByRole('button', { name: `Sign off ${OPEN.length}` }).click();
		const result = page.getByTestId('bulk-result');
		await expect(result).toContainText(`${rest} done, ${BY_REVIEWER.length} refused`);
		await expect(result.getByTestId('bulk-refused')).toHaveCount(BY_REVIEWER.length);
		const refusals = (await result.getByTestId('bulk-refused').allTextContents()).sort();
		expect(refusals).toEqual(BY_REVIEWER.map((i) => `pod ${stamp} ${String(i).padStart(2, '0')} rev 2: You ran this repair; a different reviewer must sign it off.`));
		await page.screenshot({ path: shot('journey-bulk-sign-off'), fullPage: true });
		// And five clear originals through the API's bulk route.
		const clearIds = CLEAR_SIGNED.map((i) => revOf.get(i)!);
		const bulk = await page.request.post('/api/v1/queue/bulk', { headers: { origin: baseURL! }, data: { action: 'sign-off', revisionIds: clearIds, note: 'Clear as uploaded.' } });
		expect(bulk.status()).toBe(200);
		expect((await bulk.json()).refused).toEqual([]);

		// The queue, newest revision per part, filtered by the run: 30 parts, the repaired ones at rev 2.
		await page.goto(`/queue?run=${runId}&status=all`);
		await expect(table.getByTestId('queue-row')).toHaveCount(SAMPLES);
		await expect(table.getByTestId('superseded-by')).toHaveCount(0);
		await page.screenshot({ path: shot('journey-queue-run'), fullPage: true });

		// The run page now: the repairs in its table and counts, the change still the one at DUCT_FROM.
		await page.goto(`/runs/${runId}`);
		await expect(page.getByTestId('run-summary')).toContainText(`${SAMPLES + OPEN.length} revisions in ${SAMPLES} parts`);
		await expect(page.getByTestId('run-count').and(page.locator('[data-state="signed-off"]'))).toContainText(String(rest + CLEAR_SIGNED.length));
		await expect(page.getByTestId('run-count').and(page.locator('[data-state="repair-proposed"]'))).toContainText(String(BY_REVIEWER.length));
		await expect(page.getByTestId('topology-change')).toHaveCount(1);
		await expect(page.getByTestId('run-row')).toHaveCount(SAMPLES + OPEN.length);
		// Each held original says which revision repaired it, and each repair which revision it repaired.
		await expect(page.getByTestId('run-repaired-in')).toHaveCount(OPEN.length);
		await expect(page.getByTestId('run-repair-of')).toHaveCount(OPEN.length);
		await expect(page.getByTestId('run-row').filter({ hasText: `pod ${stamp} ${String(OPEN[0]).padStart(2, '0')}` }).first().getByTestId('run-repaired-in')).toHaveText('repaired in rev 2');
		await expect(page.getByTestId('dataset-count')).toHaveText(String(rest + CLEAR_SIGNED.length));
		await page.screenshot({ path: shot('journey-run-page'), fullPage: true });
		await signOut(page);

		// The run's manifest: exactly the signed-off revisions, each sha256 that of the bytes behind its link.
		const signedIds = (await (await api.get(`/api/v1/queue?run=${runId}&status=signed-off&revisions=all&pageSize=200`)).json()).rows.map((r: { id: number }) => r.id).sort((a: number, b: number) => a - b);
		expect(signedIds).toHaveLength(rest + CLEAR_SIGNED.length);
		const engineerRepairs = signedIds.filter((id: number) => !clearIds.includes(id));
		const csv = await api.get(`/api/v1/runs/${runId}/dataset?format=csv`);
		expect(csv.status()).toBe(200);
		const rows = parse(await csv.body(), { columns: true }) as Record<string, string>[];
		expect(rows.map((r) => Number(r.revision_id)).sort((a, b) => a - b)).toEqual(signedIds);
		const files = new Map<string, Buffer>();
		for (const r of rows) {
			expect(r.run_id).toBe(String(runId));
			const file = await api.get(r.download_url);
			expect(file.status()).toBe(200);
			const body = await file.body();
			expect(sha(body), `revision ${r.revision_id}`).toBe(r.file_sha256);
			files.set(r.zip_path, body);
			const i = Number(JSON.parse(r.meta).iteration);
			expect(r.iteration).toBe(String(i));
			if (engineerRepairs.includes(Number(r.revision_id))) expect(r.revision).toBe('2');
			// An original as uploaded: the manifest's sha256 is that of the bytes the generator sent.
			else expect(r.file_sha256).toBe(sha(bytes[i]));
		}
		expect(rows.filter((r) => r.revision === '2').map((r) => Number(JSON.parse(r.meta).iteration)).sort((a, b) => a - b)).toEqual(OPEN.filter((i) => !BY_REVIEWER.includes(i)));

		// The run's zip: exactly those files, byte for byte, and the two manifests.
		const zip = await api.get(`/api/v1/runs/${runId}/dataset?format=zip`);
		expect(zip.headers()['content-type']).toBe('application/zip');
		const unzipped = unzipSync(new Uint8Array(await zip.body()));
		expect(Object.keys(unzipped).sort()).toEqual([...files.keys(), 'manifest.csv', 'manifest.jsonl'].sort());
		for (const [p, b] of files) expect(Buffer.from(unzipped[p]).equals(b), p).toBe(true);
		await api.dispose();
		await mailbox.close();
	} finally {
		await page.goto('/');
		if (await page.getByRole('button', { name: 'Sign out' }).isVisible()) await signOut(page);
		await setAlsoRole(page, 'reviewer', 'engineer', false);
	}
});
