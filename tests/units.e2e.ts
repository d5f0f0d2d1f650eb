import { expect, test, type Page } from '@playwright/test';
import { setProfileField, shot, signInAs, signOut, uploadAndOpen } from './helpers';

const PART = `pod-units-${Date.now().toString(36)}`;

const setSizeCheck = (page: Page, mode: 'cells' | 'off') =>
	setProfileField(page, 'sensor-pods', (p) => p.getByLabel('size check mode').selectOption(mode).then(() => {}));

test('a pod written in metres into the millimetre project is held with the likely factor, and the one-click rescale makes a revision that passes', async ({ page }) => {
	test.setTimeout(150_000);
	await setSizeCheck(page, 'cells');
	try {
		await signInAs(page, 'designer');
		await uploadAndOpen(page, { project: 'sensor-pods', part: PART, file: 'fixtures/pod-written-in-metres.stl' });
		await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
		const size = page.locator('[data-rule="expected-size"]');
		await expect(size).toHaveAttribute('data-passed', 'false');
		await expect(size).toContainText('likely ×1,000 (m → mm)');
		await expect(size.getByTestId('explanation')).toContainText('metres read as millimetres');
		await page.screenshot({ path: shot('revision-unit-mistake-designer'), fullPage: true });
		const heldUrl = page.url();
		await signOut(page);

		await signInAs(page, 'engineer');
		await page.goto(heldUrl);
		await expect(page.getByTestId('unit-fix')).toBeVisible();
		await page.getByRole('button', { name: /Rescale ×1,000 into a new revision/ }).click();
		await expect(page.getByTestId('repair-result')).toBeVisible({ timeout: 60_000 });
		await page.getByTestId('repair-result').click();
		await expect(page.locator('h1 [data-status]')).toHaveText(/Repair proposed/, { timeout: 30_000 });
		await expect(page.locator('[data-rule="expected-size"]')).toHaveAttribute('data-passed', 'true');
		await expect(page.locator('[data-testid="rule"][data-passed="false"]')).toHaveCount(0);
		await page.screenshot({ path: shot('revision-unit-mistake-rescaled'), fullPage: true });
		await signOut(page);
	} finally {
		await setSizeCheck(page, 'off');
	}
});

test('with the project’s size check off, a pod written in metres still shows the unit mistake as a warning that does not hold, and the engineer is offered the rescale', async ({ page }) => {
	test.setTimeout(120_000);
	await signInAs(page, 'designer');
	await uploadAndOpen(page, { project: 'sensor-pods', part: `${PART}-unset`, file: 'fixtures/pod-written-in-metres.stl' });
	// Held by its short edges (a rule of the project), not by the size.
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
	const size = page.locator('[data-rule="expected-size"]');
	await expect(size).toHaveAttribute('data-warning', 'true');
	await expect(size).toContainText('likely ×1,000 (m → mm)');
	await expect(size.getByTestId('explanation')).toContainText('does not hold the revision');
	await expect(page.locator('[data-rule="min-edge-length"] [data-testid="explanation"]')).toContainText('unit mistake');
	await expect(page.getByTestId('rules').locator('h2')).toContainText('1 not met · 1 to look at');
	await expect(page.getByTestId('hint-unit-mistake')).toContainText('m read as mm, ×1,000');
	await page.screenshot({ path: shot('revision-unit-mistake-no-size-rule'), fullPage: true });
	const url = page.url();
	await signOut(page);
	await signInAs(page, 'engineer');
	await page.goto(url);
	await expect(page.getByRole('button', { name: /Rescale ×1,000 into a new revision/ })).toBeVisible();
	await signOut(page);
});
