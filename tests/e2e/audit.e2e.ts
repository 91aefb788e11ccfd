import { expect, test } from '@playwright/test';
import { shot, signIn } from './helpers';

// The simple Audit trail page of 3/10 (the full browser arrives with 8/10): Quality and
// Inspector read the newest events with times in site time, check the chain, and export.
test('an inspector reads the newest events, checks the chain and downloads the export', async ({
	page
}) => {
	await page.setViewportSize({ width: 1280, height: 900 });
	await signIn(page, 'inspector');
	await page
		.getByRole('navigation', { name: 'Main' })
		.getByRole('link', { name: 'Audit trail' })
		.click();
	await expect(page).toHaveURL('/audit');
	const table = page.getByRole('table', { name: 'Newest audit events' });
	await expect(table.getByRole('columnheader')).toHaveText([
		'Seq',
		'Time',
		'Who',
		'Action',
		'Record',
		'Reason'
	]);
	// The inspector's own sign-in is among the newest events, with the time in site time and zone.
	const signInRow = table
		.getByRole('row')
		.filter({ hasText: 'auth.sign_in' })
		.filter({ hasText: 'Iris Moravec' })
		.first();
	await expect(signInRow).toContainText(/\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} CES?T/);

	await page.getByRole('button', { name: 'Check the chain' }).click();
	await expect(page.getByText(/Intact: all \d+ events verify\./)).toBeVisible();
	await shot(page, 'audit-trail');

	const download = page.waitForEvent('download');
	await page.getByRole('link', { name: 'Export the whole trail (JSON Lines)' }).click();
	expect((await download).suggestedFilename()).toMatch(
		/^countersign-audit-trail-\d{4}-\d{2}-\d{2}\.jsonl$/
	);
});

test('a technician has no Audit trail: no link, and the page answers 403', async ({ page }) => {
	await signIn(page, 'tech1');
	await expect(
		page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' })
	).toHaveCount(0);
	const response = await page.goto('/audit');
	expect(response?.status()).toBe(403);
});
