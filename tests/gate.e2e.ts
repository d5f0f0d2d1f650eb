import { expect, test } from '@playwright/test';
import { shot, signInAs, signOut, uploadAndOpen } from './helpers';

const PART = `poked-sphere-${Date.now().toString(36)}`;
const TITLE = PART.replace(/-/g, ' ');

test('a closed sphere with one vertex pushed through the other side is held, is found under its rule in the queue, and cannot be signed off', async ({ page, baseURL }) => {
	test.setTimeout(120_000);
	await signInAs(page, 'designer');
	// The upload is answered before its check runs; the wait for the link is the test's own limit.
	await uploadAndOpen(page, { project: 'sensor-pods', part: PART, file: 'fixtures/sphere-vertex-pushed-through.stl' });
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
	const revUrl = page.url();
	// Self-intersection is its only defect: every other rule is met.
	await expect(page.locator('[data-rule="no-self-intersections"]')).toHaveAttribute('data-passed', 'false');
	await expect(page.locator('[data-testid="rule"][data-passed="false"]')).toHaveCount(1);
	await expect(page.locator('[data-rule="no-self-intersections"]').getByTestId('explanation')).toContainText('passes through itself');
	await signOut(page);

	await signInAs(page, 'engineer');
	await page.goto('/queue?rule=no-self-intersections&status=all');
	const row = page.getByTestId('queue-row').filter({ hasText: TITLE });
	await expect(row).toHaveCount(1);
	await expect(row).toContainText('No self-intersections');
	await expect(row).toContainText('Held');
	await page.screenshot({ path: shot('queue-self-intersections'), fullPage: true });
	await signOut(page);

	await signInAs(page, 'reviewer');
	await page.goto(revUrl);
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/);
	await expect(page.getByRole('button', { name: 'Sign off for the solver' })).toHaveCount(0);
	await page.screenshot({ path: shot('revision-self-intersections-held'), fullPage: true });
	// The server refuses a sign-off posted straight to the action, and the revision stays held.
	const res = await page.request.post(`${revUrl}?/signOff`, { form: { note: 'looks fine to me' }, headers: { origin: baseURL!, 'x-sveltekit-action': 'true', accept: 'application/json' } });
	const body = await res.json();
	expect(body.type).toBe('failure');
	expect(body.status).toBe(409);
	await page.reload();
	await expect(page.locator('h1 [data-status]')).toHaveText(/Held/);
	const id = revUrl.split('/').pop();
	expect((await page.request.get(`/api/v1/revisions/${id}/clearance`)).status()).not.toBe(200);
});
