import { expect, test } from '@playwright/test';
import { ROLES, shot, signIn, signInAs, signOut } from './helpers';

test('each demo role signs in and sees the roles it holds', async ({ page }) => {
	for (const role of ROLES) {
		await signInAs(page, role);
		await expect(page).toHaveURL(/\/queue/);
		await expect(page.locator('aside')).toContainText(role);
		if (role === 'admin') await expect(page.getByRole('link', { name: /People & roles/ })).toBeVisible();
		else await expect(page.getByRole('link', { name: /People & roles/ })).toHaveCount(0);
		await signOut(page);
	}
});

test('a wrong password gets a clear error and no session', async ({ page }) => {
	await page.goto('/sign-in');
	await page.screenshot({ path: shot('sign-in'), fullPage: true });
	await signIn(page, 'designer@example.test', 'not-the-password');
	await expect(page.getByRole('alert')).toHaveText('That e-mail and password do not match an active account.');
	await page.screenshot({ path: shot('sign-in-wrong-password'), fullPage: true });
	await page.goto('/queue');
	await expect(page).toHaveURL(/\/sign-in\?next=%2Fqueue/);
});

test('a designer opening an admin page gets 403', async ({ page }) => {
	await signInAs(page, 'designer');
	const res = await page.goto('/admin/users');
	expect(res?.status()).toBe(403);
	await expect(page.getByRole('heading', { name: 'Not allowed for your role' })).toBeVisible();
	await page.screenshot({ path: shot('designer-403'), fullPage: true });
});

test('an unauthenticated API request gets 401 with a JSON message', async ({ request }) => {
	const res = await request.get('/api/v1/queue');
	expect(res.status()).toBe(401);
	expect((await res.json()).message).toMatch(/Authentication required/);
});

test('an invitation mail arrives and its link sets a password that then works', async ({ page }) => {
	const email = `new-hydro-${Date.now()}@example.test`;
	await signInAs(page, 'admin');
	await page.goto('/admin/users');
	await page.getByLabel('Name').fill('Noor Hydro');
	await page.getByLabel('E-mail').fill(email);
	await page.getByRole('checkbox', { name: /^engineer/ }).last().check();
	await page.getByRole('button', { name: 'Send invitation' }).click();
	await expect(page.getByRole('status')).toContainText(`Invitation sent to ${email}`);
	await page.screenshot({ path: shot('admin-people'), fullPage: true });
	await signOut(page);

	// The outbox is delivered to the mail catcher within a few seconds.
	const mail = page.getByTestId('mail').filter({ hasText: email });
	await expect(async () => {
		await page.goto('/dev/mailbox');
		await expect(mail).toHaveCount(1, { timeout: 500 });
	}).toPass({ timeout: 15_000 });
	await expect(mail.getByTestId('mail-subject')).toHaveText('You are invited to Shellgate');
	await page.screenshot({ path: shot('mailbox'), fullPage: true });
	await mail.getByRole('link', { name: /\/invite\// }).click();

	await expect(page.getByRole('heading', { name: 'Welcome, Noor Hydro' })).toBeVisible();
	await page.getByLabel('New password').fill('tide-tables-42');
	await page.getByLabel('Repeat it').fill('tide-tables-42');
	await page.getByRole('button', { name: 'Set password and sign in' }).click();
	await expect(page.getByTestId('whoami')).toHaveText('Noor Hydro');
	await signOut(page);

	await signIn(page, email, 'tide-tables-42');
	await expect(page.getByTestId('whoami')).toHaveText('Noor Hydro');
	await page.screenshot({ path: shot('queue-after-invite'), fullPage: true });
});

test('People & roles keeps every role ticked through repeated saves', async ({ page }) => {
	const email = `pod-designer-${Date.now()}@example.test`;
	await signInAs(page, 'admin');
	await page.goto('/admin/users');
	await page.getByLabel('Name').fill('Pia Designer');
	await page.getByLabel('E-mail').fill(email);
	await page.getByRole('checkbox', { name: /^designer/ }).last().check();
	await page.getByRole('button', { name: 'Send invitation' }).click();
	await expect(page.getByRole('status')).toContainText(`Invitation sent to ${email}`);

	const row = page.getByRole('row').filter({ hasText: email });
	const box = (r: string) => row.getByRole('checkbox', { name: r, exact: true });
	await expect(box('designer')).toBeChecked();
	await box('reviewer').check();
	for (let save = 1; save <= 3; save++) {
		await row.getByRole('button', { name: 'Save' }).click();
		await expect(row.getByText('saved')).toBeVisible();
		await expect(box('designer'), `after save ${save}`).toBeChecked();
		await expect(box('reviewer'), `after save ${save}`).toBeChecked();
		await expect(box('admin')).not.toBeChecked();
		await expect(box('engineer')).not.toBeChecked();
	}
	// What the server holds, seen on a fresh load.
	await page.reload();
	await expect(box('designer')).toBeChecked();
	await expect(box('reviewer')).toBeChecked();
	await page.screenshot({ path: shot('admin-roles-kept'), fullPage: true });
});
