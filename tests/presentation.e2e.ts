// Details of presentation: an upload refused before sending says so in its row, API tokens expire
// (and say so when they have), and people without the admin role read set-up and gate values.
import { expect, test } from '@playwright/test';
import mysql from 'mysql2/promise';
import { shot, signInAs, signOut } from './helpers';

test('an upload refused for a bad part name shows the error beside the field and no empty progress bar', async ({ page }) => {
	await signInAs(page, 'designer');
	await page.goto('/upload?project=sensor-pods');
	await page.getByLabel('Part').fill('!!!');
	await page.getByLabel('Files').setInputFiles('fixtures/cube-closed.stl');
	await page.getByRole('button', { name: 'Upload' }).click();
	await expect(page.getByText('Needs a letter or digit')).toBeVisible();
	const row = page.getByTestId('upload-item');
	await expect(row.getByTestId('upload-waiting')).toHaveText(/Not sent: correct the fields above/);
	await expect(row.getByRole('progressbar')).toHaveCount(0);
	await signOut(page);
});

test('a part named as a person writes it is created under that name, its address made from it', async ({ page }) => {
	await signInAs(page, 'designer');
	await page.goto('/upload?project=sensor-pods');
	await page.getByLabel('Part').fill('Pod with fins Ø40');
	await expect(page.getByTestId('new-part')).toContainText('at the address pod-with-fins-40');
	await page.getByLabel('Files').setInputFiles('fixtures/cube-closed.stl');
	await page.getByRole('button', { name: 'Upload' }).click();
	const row = page.getByTestId('upload-item');
	await expect(row).toContainText('pod-with-fins-40: new part');
	await row.getByRole('link', { name: 'Open revision' }).click();
	await expect(page.locator('h1')).toContainText('Pod with fins Ø40');
	// The same name again (any case) is the same part, a new revision of it.
	await page.goto('/upload?project=sensor-pods');
	await page.getByLabel('Part').fill('pod WITH fins ø40');
	await expect(page.getByTestId('new-part')).toHaveCount(0);
	await page.getByLabel('Files').setInputFiles('fixtures/cube-one-face-missing.stl');
	await page.getByRole('button', { name: 'Upload' }).click();
	await expect(page.getByTestId('upload-item')).toContainText('pod-with-fins-40: new revision');
	await signOut(page);
});

test('a token is created with an expiry, shows it, and once expired is refused with a JSON message that says so', async ({ page, playwright, baseURL }) => {
	await signInAs(page, 'reviewer');
	await page.goto('/settings');
	await page.getByLabel('Name').fill('expiry check');
	await expect(page.getByLabel('Expires after')).toHaveValue('90');
	await page.getByLabel('Expires after').selectOption('7');
	await page.getByRole('button', { name: 'Create token' }).click();
	const token = (await page.getByTestId('new-token').textContent())!.trim();
	await expect(page.getByTestId('copy-token')).toBeVisible();
	const in7 = new Date(Date.now() + 7 * 86_400_000).toISOString().slice(0, 10);
	await expect(page.getByRole('status').filter({ hasText: 'expiry check' })).toContainText(`works until ${in7}`);
	await expect(page.getByRole('row').filter({ hasText: 'expiry check' }).getByTestId('token-expires')).toHaveText(in7);
	await page.screenshot({ path: shot('settings-token-created'), fullPage: true });

	const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${token}` } });
	expect((await api.get('/api/v1/queue')).status()).toBe(200);
	// A week later (moved in the database rather than waited for):
	const db = await mysql.createConnection({ uri: process.env.DATABASE_URL! });
	try {
		await db.query('UPDATE api_token SET expires_at = NOW() - INTERVAL 1 MINUTE WHERE prefix = ?', [token.slice(0, 10)]);
	} finally {
		await db.end();
	}
	const refused = await api.get('/api/v1/queue');
	expect(refused.status()).toBe(401);
	expect(refused.headers()['content-type']).toContain('application/json');
	expect((await refused.json()).message).toMatch(/^This API token expired \(.+ UTC\) and no longer works/);
	await api.dispose();
	await page.reload();
	await expect(page.getByRole('row').filter({ hasText: 'expiry check' }).getByTestId('token-expires')).toHaveText(/^expired /);
	await signOut(page);
});

test('people without the admin role read the project set-up and gate profile as values, not as inputs', async ({ page }) => {
	await signInAs(page, 'engineer');
	await page.goto('/projects/sensor-pods');
	await expect(page.getByTestId('setup-readonly')).toContainText('Target cell size');
	await expect(page.getByTestId('profile-readonly')).toContainText('Closed surface');
	await expect(page.getByRole('spinbutton')).toHaveCount(0);
	await expect(page.getByRole('button', { name: /Save/ })).toHaveCount(0);
	await page.screenshot({ path: shot('project-read-only'), fullPage: true });
	await signOut(page);

	await signInAs(page, 'admin');
	await page.goto('/projects/sensor-pods');
	await expect(page.getByTestId('profile-readonly')).toHaveCount(0);
	await expect(page.getByLabel('maximum shells')).toBeVisible();
	// A bad value is refused beside its field, and nothing is saved.
	await page.getByLabel('Target cell size').fill('-1');
	await page.getByRole('button', { name: 'Save setup' }).click();
	await expect(page.getByText('The target cell size must be positive.')).toBeVisible();
	await page.screenshot({ path: shot('project-admin-field-error'), fullPage: true });
	await signOut(page);
});
