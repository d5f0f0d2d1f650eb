import { expect, test, type Page } from '@playwright/test';
import { setAlsoRole, shot, signInAs, signOut, uploadAndOpen } from './helpers';

const PART = `tow-repair-${Date.now().toString(36)}`;

test('an engineer repairs a held revision, cannot sign off their own repair, and a different reviewer signs it off', async ({ page }) => {
	test.setTimeout(150_000);
	// The engineer also holds the reviewer role here, so the four-eyes rule is what stops them.
	await setAlsoRole(page, 'engineer', 'reviewer', true);
	try {
		await signInAs(page, 'designer');
		await uploadAndOpen(page, { project: 'tow-bodies', part: PART, file: 'fixtures/tow-body-hole.obj' });
		await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
		const heldUrl = page.url();
		await signOut(page);

		await signInAs(page, 'engineer');
		await page.goto(heldUrl);
		await expect(page.getByTestId('repair-panel')).toBeVisible();
		await page.getByRole('button', { name: 'Propose repair' }).click();
		await expect(page.getByTestId('repair-result')).toBeVisible({ timeout: 60_000 });
		await page.getByTestId('repair-result').click();
		await expect(page.locator('h1 [data-status]')).toHaveText(/Repair proposed/, { timeout: 30_000 });
		// Before and after, with the measured deviation inside the project's tolerance.
		const changes = page.getByTestId('repair-changes');
		await expect(changes).toContainText('What the repair changed');
		await expect(page.getByTestId('deviation')).toContainText('within the deviation limit');
		await expect(page.getByTestId('repair-verdict')).toContainText("within this project's repair limits");
		await expect(page.getByTestId('repair-log').locator('li')).toHaveCount(9);
		await expect(page.getByTestId('four-eyes')).toHaveText('You ran this repair; a different reviewer must sign it off.');
		await expect(page.getByRole('button', { name: 'Sign off for the solver' })).toHaveCount(0);
		await page.screenshot({ path: shot('repair-proposed-engineer'), fullPage: true });
		const repairedUrl = page.url();
		// The server refuses the engineer's sign-off even when the form is posted by hand.
		const forced = await page.request.post(`${repairedUrl}?/signOff`, { form: { note: '' }, headers: { origin: new URL(repairedUrl).origin } });
		expect(JSON.stringify(await forced.json())).toContain('You ran this repair');
		// The repaired surface downloads in each format.
		for (const f of ['stl', 'ply', 'obj']) {
			const res = await page.request.get(`/api/v1/revisions/${repairedUrl.split('/').pop()}/export?format=${f}`);
			expect(res.status()).toBe(200);
			expect(res.headers()['content-disposition']).toContain(`.${f}`);
		}
		await signOut(page);

		await signInAs(page, 'reviewer');
		await page.goto(repairedUrl);
		await page.screenshot({ path: shot('repair-proposed-reviewer'), fullPage: true });
		await page.getByRole('button', { name: 'Sign off for the solver' }).click();
		await expect(page.getByTestId('signed-by')).toContainText('reviewer@example.test');
		// The engineer who ran the repair and the designer who uploaded the original both hear of it.
		const partWords = PART.replace(/-/g, ' ');
		for (const [to, subject] of [
			['engineer@example.test', /^Signed off: /],
			['designer@example.test', /^Repair of your upload signed off: /]
		] as const) {
			await expect(async () => {
				await page.goto('/dev/mailbox');
				const mail = page.getByTestId('mail').filter({ hasText: partWords }).filter({ has: page.getByTestId('mail-subject').filter({ hasText: subject }) });
				await expect(mail).toHaveCount(1, { timeout: 500 });
				await expect(mail.getByTestId('mail-to')).toHaveText(to, { timeout: 500 });
			}).toPass({ timeout: 20_000 });
		}
		await page.goto('/queue');
		await signOut(page);
	} finally {
		await setAlsoRole(page, 'engineer', 'reviewer', false);
	}
});

test('a repair outside its limits is held, shows the limits table, and the reviewer signs off only with an override', async ({ page }) => {
	test.setTimeout(150_000);
	await signInAs(page, 'designer');
	await uploadAndOpen(page, { project: 'sensor-pods', part: `${PART}-open-cube`, file: 'fixtures/cube-one-face-missing.stl' });
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
	const heldUrl = page.url();
	await signOut(page);

	await signInAs(page, 'engineer');
	await page.goto(heldUrl);
	await page.getByRole('button', { name: 'Propose repair' }).click();
	await expect(page.getByTestId('repair-result')).toBeVisible({ timeout: 60_000 });
	const repairedHref = await page.getByTestId('repair-result').getAttribute('href');
	await signOut(page);

	await signInAs(page, 'reviewer');
	await page.goto(repairedHref!);
	// Filling the missing face adds a fifth of the cube's area: outside the 5 % area limit.
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
	await expect(page.getByTestId('repair-limit-area')).toContainText('outside');
	// One panel, one verdict: the headline says held, even though the surface move alone is within its limit.
	await expect(page.getByTestId('repair-verdict')).toContainText('Held for a reviewer: area outside its limit');
	await expect(page.getByTestId('deviation')).toContainText('within the deviation limit');
	await expect(page.getByTestId('override-needed')).toBeVisible();
	// The viewer's deviation against the original: the filled face moved no vertex, so only the
	// new faces' centres show the move. Its samples (vertices and face centres of this revision)
	// are a subset of the server's (both sides, plus points spread by area), so its largest is
	// above zero and not above the server's Hausdorff figure.
	const toMm = (t: string) => {
		const m = /([\d.,]+)\s*(µm|mm|cm|m)\b/.exec(t)!;
		return Number(m[1].replace(/,/g, '')) * { µm: 1e-3, mm: 1, cm: 10, m: 1000 }[m[2] as 'mm'];
	};
	const serverMax = toMm(/Hausdorff\)\s*([^;]+)/.exec((await page.getByTestId('deviation').textContent())!)![1]);
	await expect(page.getByTestId('mesh-viewer')).toHaveAttribute('data-compare', 'ready', { timeout: 60_000 });
	await page.getByTestId('viewer-compare-mode').selectOption('deviation');
	await expect(page.getByTestId('viewer-deviation')).toContainText('max', { timeout: 60_000 });
	const viewerMax = toMm(/face centres\)\s*(.+?)·/.exec((await page.getByTestId('viewer-deviation').textContent())!)![1]);
	expect(viewerMax).toBeGreaterThan(0);
	expect(viewerMax).toBeLessThanOrEqual(serverMax * 1.01);
	await page.screenshot({ path: shot('repair-held-limits'), fullPage: true });
	await page.getByLabel('Override reason (required)').fill('the missing face was an export slip; the filled cap is the designed lid');
	await page.getByRole('button', { name: 'Override the limits and sign off' }).click();
	await expect(page.getByTestId('override')).toContainText('export slip');
	await signOut(page);
});
