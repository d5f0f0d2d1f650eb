// The revision page offers exactly what the state table (src/lib/revision-states.ts) allows this
// person in this state: the same allowedEvents() the server refuses by.
import { expect, test, type Page } from '@playwright/test';
import { allowedEvents, type RevisionEvent, type RevisionState } from '../src/lib/revision-states';
import { signInAs, signOut } from './helpers';

type Row = { id: number; status: RevisionState };

/** The events the page offers, read from its forms. */
async function offeredOnPage(page: Page, id: number): Promise<{ events: RevisionEvent[]; overridable: boolean }> {
	await page.goto(`/revisions/${id}`);
	await expect(page.getByTestId('history')).toBeVisible();
	const events: RevisionEvent[] = [];
	if (await page.locator('form[action="?/recheck"]').count()) events.push('recheck');
	if (await page.locator('form[action="?/return"]').count()) events.push('return');
	const overridable = (await page.getByTestId('override-needed').count()) > 0;
	if (await page.locator('form[action="?/signOff"]').count()) events.push(overridable ? 'sign-off-override' : 'sign-off');
	return { events: events.sort(), overridable };
}

test('the revision page offers exactly the allowed events, for each role and state of the demo revisions', async ({ page }) => {
	test.setTimeout(120_000);
	const ROLES = { engineer: ['engineer'], reviewer: ['reviewer'], designer: ['designer'] } as const;
	// The demo revisions are checked by the app's worker after it starts: wait for two decided states.
	await signInAs(page, 'engineer');
	let rows: Row[] = [];
	await expect
		.poll(
			async () => {
				const res = await page.request.get('/api/v1/queue?status=all&pageSize=200');
				rows = ((await res.json()) as { rows: Row[] }).rows;
				return new Set(rows.map((r) => r.status).filter((s) => s !== 'awaiting-check' && s !== 'checking')).size;
			},
			{ timeout: 90_000 }
		)
		.toBeGreaterThanOrEqual(2);
	// One revision per state present (at least held and clear from the demo data).
	const byState = new Map<RevisionState, number>();
	for (const r of rows) if (!byState.has(r.status) && r.status !== 'awaiting-check' && r.status !== 'checking') byState.set(r.status, r.id);
	await signOut(page);

	let compared = 0;
	for (const [role, roles] of Object.entries(ROLES)) {
		await signInAs(page, role as keyof typeof ROLES);
		for (const [state, id] of byState) {
			const { events, overridable } = await offeredOnPage(page, id);
			// sign-off-override is offered only for a repair held by its repair limits alone, which the
			// server checks beyond the state; plain sign-off never starts from held.
			const expected = allowedEvents({ roles }, state).filter((e) => e !== 'sign-off-override' || overridable).sort();
			expect(events, `${role} on a ${state} revision`).toEqual(expected);
			compared++;
		}
		await signOut(page);
	}
	console.log(`[actions] ${compared} role × state pages compared (${[...byState.keys()].join(', ')} × ${Object.keys(ROLES).join(', ')})`);
	expect(compared).toBeGreaterThanOrEqual(4);
});
