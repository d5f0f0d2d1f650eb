import { expect, test, type Page } from '@playwright/test';
import { setProfileField, shot, signInAs, signOut, uploadAndOpen } from './helpers';

const PART = `blocks-gap-${Date.now().toString(36)}`;

const setWallGap = (page: Page, cells: string) => setProfileField(page, 'sensor-pods', (p) => p.getByLabel('minimum wall and gap in cells').fill(cells));

test('two blocks 0.01 mm apart in the 2 mm-cell project are held by the walls-and-gaps rule, with the gap and where it is', async ({ page }) => {
	test.setTimeout(120_000);
	await setWallGap(page, '2');
	try {
		await signInAs(page, 'designer');
		await uploadAndOpen(page, { project: 'sensor-pods', part: PART, file: 'fixtures/blocks-0.01-apart.stl' });
		await expect(page.locator('h1 [data-status]')).toHaveText(/Held/, { timeout: 30_000 });
		const rule = page.locator('[data-rule="walls-and-gaps"]');
		await expect(rule).toHaveAttribute('data-passed', 'false');
		// Analytic: the blocks are 0.01 mm apart, 0.005 cells of 2 mm; the gap faces sit at x = 20 and 20.01.
		await expect(rule).toContainText('narrowest gap 0.01 mm (0.005 cells)');
		await expect(rule.getByTestId('explanation')).toContainText('near (20,');
		await expect(page.getByTestId('narrowest-gap')).toContainText('0.005 cells');
		// The separate-bodies hint counts the blocks; it does not advise removing either.
		await expect(page.getByText('The mesh is made of 2 separate bodies')).toBeVisible();
		await page.screenshot({ path: shot('revision-walls-gaps-held'), fullPage: true });
		// The viewer colours by gap width in cells (measured in a worker) and reads the value under the pointer.
		await expect(page.getByTestId('mesh-viewer')).toHaveAttribute('data-status', 'ready', { timeout: 30_000 });
		// The findings list has the gap and its two regions (one face each side): clicking the
		// narrowest gap flies there and colours the part by gap width in cells.
		await expect(page.getByTestId('finding-count-cells-gap')).toHaveText('2');
		await expect(page.getByTestId('finding-count-cells-wall')).toHaveText('0');
		const worst = page.getByTestId('finding-item-gap:min');
		await expect(worst).toContainText('narrowest gap: 0.01 mm (0.005 cells)');
		await expect(page.getByTestId('viewer-cell-findings').getByRole('button', { name: /^gap region/ })).toHaveCount(2);
		await worst.click();
		await expect(worst).toHaveAttribute('aria-current', 'true');
		await expect(page.getByTestId('viewer-cell-colour')).toHaveValue('gap');
		await expect(page.getByTestId('viewer-cells')).toHaveAttribute('data-cells', 'ready', { timeout: 30_000 });
		await expect(page.getByTestId('viewer-cells')).toContainText(/gap width in cells of 2(\.0+)? mm/);
		const canvas = page.getByTestId('mesh-viewer').locator('canvas').first();
		const box = (await canvas.boundingBox())!;
		await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
		await expect(page.getByTestId('viewer-hover-cells')).toContainText('gap');
		await page.getByTestId('mesh-viewer').screenshot({ path: shot('viewer-gap-cells') });
		// Sharp edges as OBJ lines: each block has its 12 edges at 90°, the face diagonals are flat (0°).
		const href = await page.getByTestId('feature-edges-download').getAttribute('href');
		const obj = await (await page.request.get(href!)).text();
		expect(obj.split('\n').filter((l) => l.startsWith('l ')).length).toBe(24);
		expect(obj.split('\n').filter((l) => l.startsWith('v ')).length).toBe(16);
		await signOut(page);
	} finally {
		// Signed out whatever step failed, so the clean-up can sign in as admin.
		await page.context().clearCookies();
		await setWallGap(page, '');
	}
});
