import { expect, type Page } from '@playwright/test';

export const DEMO_PASSWORD = 'shellgate-demo';
export const ROLES = ['engineer', 'designer', 'reviewer', 'admin'] as const;

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
	await page.goto('/sign-in');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
}

export async function signInAs(page: Page, role: (typeof ROLES)[number]) {
	await signIn(page, `${role}@example.test`);
	await expect(page.getByTestId('whoami')).toBeVisible();
}

export async function signOut(page: Page) {
	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page).toHaveURL(/\/sign-in/);
}

export const shot = (name: string) => `test-results/screens/${name}.png`;

/** Uploads one fixture as a new part through the upload page and opens the revision it made. */
export async function uploadAndOpen(page: Page, opts: { project: string; part: string; file: string }) {
	await page.goto(`/upload?project=${opts.project}`);
	await page.getByLabel('Part').fill(opts.part);
	await page.getByLabel('Files').setInputFiles(opts.file);
	await page.getByRole('button', { name: 'Upload' }).click();
	await page.getByTestId('upload-item').getByRole('link', { name: 'Open revision' }).click();
}

/** As admin, sets one gate field of a project's profile and saves it as the next version. */
export async function setProfileField(page: Page, project: string, set: (page: Page) => Promise<void>) {
	await signInAs(page, 'admin');
	await page.goto(`/projects/${project}`);
	await set(page);
	await page.getByRole('button', { name: /Save as version/ }).click();
	await expect(page.getByText(/Saved as version/)).toBeVisible();
	await signOut(page);
}

/** As admin, gives a demo user a second role (say the reviewer the engineer role, so they can run repairs), or takes it away. */
export async function setAlsoRole(page: Page, who: 'engineer' | 'reviewer' | 'designer', role: 'engineer' | 'reviewer' | 'designer', on: boolean) {
	await signInAs(page, 'admin');
	await page.goto('/admin/users');
	const row = page.getByRole('row').filter({ hasText: `${who}@example.test` });
	const box = row.getByRole('checkbox', { name: role });
	if (on) await box.check();
	else await box.uncheck();
	await row.getByRole('button', { name: 'Save' }).click();
	await expect(row.getByText('saved')).toBeVisible();
	await signOut(page);
}

/** Proposes the standard repair from the revision page and waits for it; returns the new revision's id. */
export async function proposeStandardRepair(page: Page, id: number): Promise<number> {
	await page.goto(`/revisions/${id}`);
	await page.getByRole('button', { name: 'Propose repair' }).click();
	await expect(page.getByTestId('repair-result')).toBeVisible({ timeout: 60_000 });
	return Number((await page.getByTestId('repair-result').getAttribute('href'))!.split('/').pop());
}
