import { expect, test } from '@playwright/test';
import { shot, signInAs, signOut, uploadAndOpen } from './helpers';

const PART = `ring-seams-${Date.now().toString(36)}`;

test('an OBJ with unwelded seams is held, says so before the rules with what a weld would give, and the one-click weld makes a closed revision', async ({ page }) => {
	test.setTimeout(150_000);
	await signInAs(page, 'designer');
	await uploadAndOpen(page, { project: 'sensor-pods', part: PART, file: 'fixtures/ring-housing-unwelded-seams.obj' });
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
	const seams = page.getByTestId('unwelded-seams');
	// 324 coincident vertices; welded: 0 boundary edges (now 96), 1 shell (now 4), genus 1 (fixture: scripts/make-fixtures.ts).
	await expect(seams).toContainText('The seams are not welded: 324 vertices');
	await expect(seams).toContainText('0 boundary edges (now 96) and 1 shell (now 4)');
	await expect(seams).toContainText('closed with genus 1');
	await expect(page.locator('[data-rule="closed"] [data-testid="explanation"]')).toContainText('unwelded seams');
	// The designer is told, but repairs are the engineer's.
	await expect(seams.getByRole('button', { name: /Weld the seams/ })).toHaveCount(0);
	await page.screenshot({ path: shot('revision-unwelded-seams-designer'), fullPage: true });
	const heldUrl = page.url();
	await signOut(page);

	await signInAs(page, 'engineer');
	await page.goto(heldUrl);
	await page.getByRole('button', { name: 'Weld the seams into a new revision' }).click();
	await expect(page.getByTestId('repair-result')).toBeVisible({ timeout: 60_000 });
	await page.getByTestId('repair-result').click();
	await expect(page.locator('h1 [data-status]')).toHaveText(/Repair proposed/, { timeout: 30_000 });
	await expect(page.getByTestId('unwelded-seams')).toHaveCount(0);
	await expect(page.locator('[data-rule="closed"]')).toHaveAttribute('data-passed', 'true');
	await expect(page.locator('[data-testid="rule"][data-passed="false"]')).toHaveCount(0);
	await page.screenshot({ path: shot('revision-unwelded-seams-welded'), fullPage: true });
	await signOut(page);
});
