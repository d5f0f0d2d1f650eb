import { expect, test } from '@playwright/test';
import { shot, signInAs } from './helpers';

test('a designer pins a comment to a spot on the shape and it is stored with its point and face', async ({ page }) => {
	test.setTimeout(90_000);
	await signInAs(page, 'designer');
	// The demo data's CTD probe pod (held: clipped by the sampling box).
	await page.goto('/queue?status=all&project=sensor-pods');
	await page.getByRole('link', { name: /CTD probe pod/ }).first().click();
	// The viewer's own readiness attribute: the revision page has no test hook.
	await expect(page.getByTestId('mesh-viewer')).toHaveAttribute('data-status', 'ready', { timeout: 60_000 });
	const box = (await page.getByTestId('viewer-canvas').boundingBox())!;
	await page.mouse.click(box.x + box.width / 2, box.y + box.height / 2);
	await expect(page.getByTestId('pin-pending')).toContainText(/Pinned to face \d+/);
	await page.getByLabel('Comment').fill('The open end sits exactly on the sampling box; widen it by 10 %.');
	await page.getByRole('button', { name: 'Add comment' }).click();
	await expect(page.getByTestId('comments')).toContainText('widen it by 10 %');
	await page.screenshot({ path: shot('comment-pinned'), fullPage: true });

	const id = page.url().split('/').pop();
	const res = await page.request.get(`/api/v1/revisions/${id}?report=0`);
	const c = (await res.json()).comments.find((x: { body: string }) => x.body.includes('widen it by 10 %'));
	expect(c.point).toHaveLength(3);
	c.point.forEach((v: number) => expect(Number.isFinite(v)).toBe(true));
	expect(Number.isInteger(c.face)).toBe(true);
});
