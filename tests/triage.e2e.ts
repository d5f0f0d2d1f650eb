import { expect, test, type Page } from '@playwright/test';
import { shot, signInAs, signOut } from './helpers';

const PART = `pod-e2e-${Date.now().toString(36)}`;

async function upload(page: Page, file: string) {
	await page.goto('/upload?project=sensor-pods');
	await page.getByLabel('Part').fill(PART);
	await page.getByLabel('Note (optional)').fill('optimiser run 14');
	await page.getByLabel('Files').setInputFiles(`fixtures/${file}`);
	await page.getByRole('button', { name: 'Upload' }).click();
	const item = page.getByTestId('upload-item');
	await expect(item.getByRole('link', { name: 'Open revision' })).toBeVisible({ timeout: 20_000 });
	await page.screenshot({ path: shot(`upload-${file}`), fullPage: true });
	await item.getByRole('link', { name: 'Open revision' }).click();
	await expect(page.getByRole('heading', { level: 1 })).toContainText(PART.replace(/-/g, ' '));
	return page.url();
}

async function waitForState(page: Page, label: string) {
	await expect(page.locator('h1 [data-status]')).toHaveText(new RegExp(label), { timeout: 30_000 });
}

test('a held mesh goes from designer to engineer to a cleared second revision signed off by a reviewer', async ({ page, browser }) => {
	test.setTimeout(120_000);
	// 1. The designer uploads a pod with a missing face: it is held, with an explanation.
	await signInAs(page, 'designer');
	const rev1 = await upload(page, 'cube-one-face-missing.stl');
	await waitForState(page, 'Held');
	const closed = page.locator('[data-rule="closed"]');
	await expect(closed).toHaveAttribute('data-passed', 'false');
	await expect(closed.getByTestId('explanation')).toContainText('1 hole');
	await expect(closed.getByTestId('explanation')).toContainText('tell fluid from solid');
	await page.screenshot({ path: shot('revision-held'), fullPage: true });
	await signOut(page);

	// 2. The engineer finds it in the queue under "Held" and returns it with a reason.
	await signInAs(page, 'engineer');
	await page.goto('/queue?status=held');
	const row = page.getByTestId('queue-row').filter({ hasText: PART.replace(/-/g, ' ') });
	await expect(row).toHaveCount(1);
	await expect(row).toContainText('Closed surface');
	await page.screenshot({ path: shot('queue-held'), fullPage: true });
	await row.getByRole('link').first().click();
	await page.getByLabel('Return to the designer — reason').fill('Close the open end cap; the sampling box cuts it off.');
	await page.getByRole('button', { name: 'Return to designer' }).click();
	await waitForState(page, 'Returned to designer');
	await signOut(page);

	// 3. The designer uploads a second revision, closed this time: it clears the gate.
	await signInAs(page, 'designer');
	const rev2 = await upload(page, 'cube-closed.stl');
	expect(rev2).not.toBe(rev1);
	await waitForState(page, 'Clear');
	await expect(page.getByTestId('history').locator('li')).toHaveCount(2);
	await signOut(page);

	// 4. The reviewer signs it off; the clearance record holds the file hash.
	await signInAs(page, 'reviewer');
	await page.goto(rev2);
	await page.screenshot({ path: shot('revision-clear'), fullPage: true });
	await page.getByRole('button', { name: 'Sign off for the solver' }).click();
	await expect(page.getByTestId('clearance')).toBeVisible();
	await expect(page.getByTestId('signed-by')).toContainText('reviewer@example.test');
	await expect(page.getByTestId('file-sha')).toHaveText(/^[0-9a-f]{64}$/);
	await page.screenshot({ path: shot('clearance'), fullPage: true });
	const id = rev2.split('/').pop();
	const json = await page.request.get(`/api/v1/revisions/${id}/clearance`);
	expect(json.status()).toBe(200);
	const record = await json.json();
	expect(record.fileSha256).toMatch(/^[0-9a-f]{64}$/);
	expect(record.gateProfileVersion).toBe(1);
	expect(record.caution).toMatch(/not a structural/);

	// 5. Three mails reached the mail catcher: held, returned, signed off.
	const mailbox = await browser.newPage();
	for (const subject of [/^Held: /, /^Returned to you: /, /^Signed off: /]) {
		await expect(async () => {
			await mailbox.goto('/dev/mailbox');
			await expect(mailbox.getByTestId('mail').filter({ hasText: PART.replace(/-/g, ' ') }).getByTestId('mail-subject').filter({ hasText: subject })).toHaveCount(1, { timeout: 500 });
		}).toPass({ timeout: 15_000 });
	}
	await mailbox.screenshot({ path: shot('mailbox-triage'), fullPage: true });
});
