import { readFileSync } from 'node:fs';
import { expect, test, type Page } from '@playwright/test';
import { proposeStandardRepair as repair, setAlsoRole, shot, signInAs, signOut } from './helpers';

const TAG = Date.now().toString(36);
const PARTS = [0, 1, 2, 3].map((i) => `bulk-pod-${TAG}-${i}`);

async function statusOf(page: Page, id: number): Promise<string> {
	return ((await (await page.request.get(`/api/v1/revisions/${id}?report=0`)).json()) as { status: string }).status;
}
async function waitFor(page: Page, id: number, status: string) {
	await expect.poll(() => statusOf(page, id), { timeout: 60_000 }).toBe(status);
}

test('a reviewer bulk-signs-off repair proposals: the ones the reviewer ran are refused and listed, the others signed off', async ({ page, baseURL }) => {
	test.setTimeout(240_000);
	await setAlsoRole(page, 'reviewer', 'engineer', true);
	try {
		// Four held uploads, each a part of its own.
		await signInAs(page, 'designer');
		const held: number[] = [];
		for (const p of PARTS) {
			const res = await page.request.post(`/api/v1/projects/tow-bodies/parts/${p}/revisions`, {
				headers: { origin: baseURL! },
				multipart: { file: { name: `${p}.obj`, mimeType: 'application/octet-stream', buffer: readFileSync('fixtures/tow-body-hole.obj') } }
			});
			expect(res.status(), await res.text()).toBe(201);
			held.push(((await res.json()) as { id: number }).id);
		}
		for (const id of held) await waitFor(page, id, 'held');
		await signOut(page);

		// The reviewer (also an engineer here) repairs two, the engineer the other two.
		await signInAs(page, 'reviewer');
		const own = [await repair(page, held[0]), await repair(page, held[1])];
		await signOut(page);
		await signInAs(page, 'engineer');
		const others = [await repair(page, held[2]), await repair(page, held[3])];
		for (const id of [...own, ...others]) await waitFor(page, id, 'repair-proposed');
		await signOut(page);

		await signInAs(page, 'reviewer');
		await page.goto('/queue?status=repair-proposed&sort=deviation&dir=desc&project=tow-bodies');
		const table = page.getByTestId('queue-table');
		// The deviation column shows each proposal's measured move from its original.
		for (const id of [...own, ...others]) await expect(table.locator(`[data-revision="${id}"] [data-testid="deviation"]`)).toContainText(/mm/);
		for (const id of [...own, ...others]) await table.locator(`[data-revision="${id}"] input[type=checkbox]`).check();
		await expect(page.getByTestId('bulk-count')).toHaveText('4 selected');
		await page.getByLabel('Action', { exact: true }).selectOption('sign-off');
		await page.getByLabel('Note on each sign-off (optional)').fill('Cleared in bulk after the hole fill.');
		await page.getByRole('button', { name: 'Sign off 4' }).click();

		const result = page.getByTestId('bulk-result');
		await expect(result).toContainText('2 done, 2 refused');
		const refused = result.getByTestId('bulk-refused');
		await expect(refused).toHaveCount(2);
		for (const id of own) await expect(result.locator(`[data-revision="${id}"]`)).toContainText('You ran this repair; a different reviewer must sign it off.');
		await page.screenshot({ path: shot('queue-bulk-sign-off-refusals'), fullPage: true });

		for (const id of others) expect(await statusOf(page, id)).toBe('signed-off');
		for (const id of own) expect(await statusOf(page, id)).toBe('repair-proposed');
		// The signed-off ones left the Needs-action view; the refused ones are still there.
		await page.goto('/queue?project=tow-bodies');
		for (const id of others) await expect(table.locator(`[data-revision="${id}"]`)).toHaveCount(0);
		for (const id of own) await expect(table.locator(`[data-revision="${id}"]`)).toHaveCount(1);
		// The held originals are superseded by their repairs: gone from the default view, marked in the full one.
		for (const id of held) await expect(table.locator(`[data-revision="${id}"]`)).toHaveCount(0);
		await page.goto('/queue?project=tow-bodies&revisions=all&status=held');
		await expect(table.locator(`[data-revision="${held[0]}"] [data-testid="superseded-by"]`)).toHaveText('superseded by rev 2');
		await page.screenshot({ path: shot('queue-all-revisions-superseded'), fullPage: true });
		// The project page lists its parts a page at a time, with the count.
		await page.goto('/projects/tow-bodies');
		await expect(page.getByTestId('parts-total')).toHaveText(/^\d+$/);
		expect(await page.getByTestId('part-row').count()).toBeLessThanOrEqual(50);
	} finally {
		await page.goto('/');
		if (await page.getByRole('button', { name: 'Sign out' }).isVisible()) await signOut(page);
		await setAlsoRole(page, 'reviewer', 'engineer', false);
	}
});
