// The repair-recipe form: steps as rows with their parameters, reordered with the keyboard,
// validated beside the field, saved on the project and run.
import { expect, test } from '@playwright/test';
import { shot, signInAs, signOut, uploadAndOpen } from './helpers';

const PART = `lid-recipe-${Date.now().toString(36)}`;

test('an engineer builds a two-step recipe, reorders it, saves it on the project and runs it', async ({ page }) => {
	test.setTimeout(150_000);
	await signInAs(page, 'designer');
	await uploadAndOpen(page, { project: 'sensor-pods', part: PART, file: 'fixtures/cube-one-face-missing.stl' });
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
	const heldUrl = page.url();
	await signOut(page);

	await signInAs(page, 'engineer');
	await page.goto(heldUrl);
	const form = page.getByTestId('recipe-form');
	const steps = form.getByTestId('recipe-step');
	// The standard recipe is the starting point: eight rows.
	await expect(steps).toHaveCount(9);
	while ((await steps.count()) > 0) await form.getByRole('button', { name: 'Remove step 1' }).click();

	await form.getByLabel('Operation to add').selectOption({ label: 'Fill holes' });
	await form.getByRole('button', { name: 'Add step' }).click();
	await form.getByLabel('Operation to add').selectOption({ label: 'Orient faces outward' });
	await form.getByRole('button', { name: 'Add step' }).click();
	await expect(steps).toHaveCount(2);
	await expect(steps.nth(0)).toHaveAttribute('data-op', 'fill-holes');

	// A parameter outside its definition is refused beside the field, before anything is queued.
	await form.getByLabel('Step 1 edges up to').fill('2');
	await form.getByLabel('Name').fill('orient, then close small holes');
	await form.getByRole('button', { name: 'Save recipe on the project' }).click();
	await expect(steps.nth(0).locator('.field-error')).toHaveText('At least 3.');
	await form.getByLabel('Step 1 edges up to').fill('50');

	// Reorder with the keyboard: focus "move step 2 up" and press Enter; the focus follows the step.
	await form.getByRole('button', { name: 'Move step 2 up' }).focus();
	await page.keyboard.press('Enter');
	await expect(steps.nth(0)).toHaveAttribute('data-op', 'orient');
	await expect(steps.nth(1)).toHaveAttribute('data-op', 'fill-holes');
	await expect(form.getByLabel('Step 2 edges up to')).toHaveValue('50');
	await expect(form.getByRole('button', { name: 'Move step 1 down' })).toBeFocused();
	// The same steps as JSON, for scripts.
	await form.getByText('The same steps as JSON').click();
	await expect(form.getByLabel('Steps as JSON')).toHaveValue(/"op": "orient".*\n.*"op": "fill-holes", "maxEdges": 50/);
	await page.screenshot({ path: shot('recipe-form'), fullPage: true });
	await form.screenshot({ path: shot('recipe-form-detail') });

	await form.getByRole('button', { name: 'Save recipe on the project' }).click();
	await expect(form.getByTestId('recipe-message')).toHaveText('Recipe “orient, then close small holes” saved on the project.');

	// Picked again after a reload, the saved recipe comes back in the saved order, and runs.
	await page.reload();
	await form.getByLabel('Recipe', { exact: true }).selectOption({ label: 'orient, then close small holes' });
	await expect(steps).toHaveCount(2);
	await expect(steps.nth(0)).toHaveAttribute('data-op', 'orient');
	await expect(form.getByLabel('Step 2 edges up to')).toHaveValue('50');
	await form.getByRole('button', { name: 'Propose repair' }).click();
	await expect(page.getByTestId('repair-result')).toBeVisible({ timeout: 60_000 });
	await page.getByTestId('repair-result').click();
	await expect(page.getByTestId('repair-log').locator('li')).toHaveCount(2, { timeout: 30_000 });
	await expect(page.getByTestId('repair-log').locator('li').first()).toContainText(/orient/i);
	await signOut(page);
});
