import { expect, test, type Page } from '@playwright/test';
import { shot, signInAs } from './helpers';

async function demoRevision(page: Page, part: string): Promise<string> {
	await page.goto('/queue');
	const link = page.getByRole('row').filter({ hasText: part }).getByRole('link').first();
	await expect(link).toBeVisible({ timeout: 30_000 });
	return (await link.getAttribute('href'))!;
}

test('the first Tab stop skips to the main content, and ? lists the shortcuts of the page', async ({ page }) => {
	await signInAs(page, 'engineer');
	await page.goto('/queue');
	await page.keyboard.press('Tab');
	const skip = page.getByTestId('skip-link');
	await expect(skip).toBeFocused();
	await expect(skip).toBeInViewport();
	await page.keyboard.press('Enter');
	await expect(page.locator('main#main')).toBeFocused();

	await page.keyboard.press('?');
	const list = page.getByTestId('shortcuts');
	await expect(list).toBeVisible();
	await expect(list).toContainText('g q');
	await expect(list).toContainText('triage queue');
	await expect(list).not.toContainText('Shape viewer');
	await page.screenshot({ path: shot('shortcuts-queue') });
	await page.keyboard.press('Escape');
	await expect(list).toBeHidden();
	// g then u still navigates, and typing ? into a field does not open the list.
	await page.keyboard.press('g');
	await page.keyboard.press('u');
	await expect(page).toHaveURL(/\/upload/);
	await page.getByLabel('Part').pressSequentially('a?b');
	await expect(list).toBeHidden();

	await page.goto(await demoRevision(page, 'Keel bulb A'));
	await page.locator('h1').click();
	await page.keyboard.press('?');
	await expect(list).toContainText('Shape viewer');
	await expect(list).toContainText('fit the part in view');
	await expect(list).toContainText('g q');
});

test('the theme follows the system and the toggle overrides it; revision pages write numbers with units', async ({ browser }) => {
	test.setTimeout(120_000);
	const ctx = await browser.newContext({ colorScheme: 'light', viewport: { width: 1500, height: 1000 } });
	const page = await ctx.newPage();
	await signInAs(page, 'engineer');
	await page.goto('/queue');
	await expect(page.locator('html')).toHaveAttribute('data-theme', 'light');
	const bg = await page.evaluate(() => getComputedStyle(document.body).backgroundColor);
	expect(bg).toBe('rgb(245, 247, 249)');
	await page.screenshot({ path: shot('queue-light'), fullPage: true });

	// Small numbers: the keel bulb, in metres. Large ones: the CTD pod, in millimetres.
	const bulb = await demoRevision(page, 'Keel bulb A');
	const pod = await demoRevision(page, 'CTD probe pod');
	for (const [name, href] of [['bulb', bulb], ['pod', pod]] as const) {
		await page.goto(href);
		const report = page.getByTestId('report');
		await expect(report).toBeVisible({ timeout: 30_000 });
		const text = (await report.innerText()) + (await page.getByTestId('rules').innerText());
		// No raw exponents, no 9-digit fractions.
		expect(text).not.toMatch(/\de[-+]\d/);
		expect(text).not.toMatch(/0\.0000\d/);
		await expect(page.getByTestId('quality-classes')).toContainText('sliver');
		await page.screenshot({ path: shot(`revision-${name}-light`), fullPage: true });
	}
	// The unit keeps its case under the upper-case table heads (innerText applies the CSS).
	const volumeHead = page.getByTestId('shells').locator('th').filter({ hasText: /volume/i });
	expect(await volumeHead.evaluate((el) => (el as HTMLElement).innerText.trim())).toMatch(/^VOLUME \((mm|m)³\)$/);
	expect(await page.getByTestId('shells').locator('th').filter({ hasText: /euler/i }).evaluate((el) => (el as HTMLElement).innerText.trim())).toBe('Euler χ');

	await page.getByTestId('theme-toggle').selectOption('dark');
	await expect(page.locator('html')).toHaveAttribute('data-theme', 'dark');
	await page.reload();
	await expect(page.locator('html')).toHaveAttribute('data-theme', 'dark');
	await page.screenshot({ path: shot('revision-pod-dark'), fullPage: true });
	await page.goto(bulb);
	await expect(page.getByTestId('report')).toBeVisible();
	await page.screenshot({ path: shot('revision-bulb-dark'), fullPage: true });
	await page.goto('/queue');
	await page.screenshot({ path: shot('queue-dark'), fullPage: true });
	await page.getByTestId('theme-toggle').selectOption('system');
	await expect(page.locator('html')).toHaveAttribute('data-theme', 'light');
	await ctx.close();
});
