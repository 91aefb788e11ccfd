import { expect, test } from '@playwright/test';
import { shot, signIn } from './helpers';

// API tokens for the plant (9/10 item 2): an Administrator creates one (shown once), the control
// system reports a SIP cycle with it, the Administrator revokes it with a reason, and the next
// report is refused (401).
test('an administrator creates a usage token, the plant reports with it, and after revoking it is refused', async ({
	page
}) => {
	await signIn(page, 'admin');
	await page.goto('/people');
	await page.getByRole('link', { name: 'API tokens' }).click();
	await expect(page.getByRole('heading', { name: 'API tokens', level: 1 })).toBeVisible();

	await page.getByRole('button', { name: 'Create the token' }).click();
	await expect(page.getByText(/Name the token by the system/)).toBeVisible();

	await page.getByLabel('Name').fill('Buffer skid control system');
	await page.getByRole('button', { name: 'Create the token' }).click();
	const shown = page.getByTestId('api-token');
	await expect(shown).toHaveText(/^cs_usage_/);
	const token = (await shown.textContent())!.trim();
	await shot(page, 'api-tokens');

	const report = (startedAt: string) =>
		page.request.post('/api/v1/equipment/XV-4203/usage', {
			headers: { authorization: `Bearer ${token}` },
			data: {
				sipCycle: {
					startedAt,
					endedAt: new Date(Date.parse(startedAt) + 40 * 60_000).toISOString(),
					peakTemperatureC: 121.1,
					absolutePressureBar: 2.05685,
					holdMinutes: 20
				}
			}
		});
	const ok = await report('2026-11-20T05:00:00Z');
	expect(ok.status()).toBe(200);
	expect(await ok.json()).toMatchObject({ equipment: 'XV-4203', sipCycle: { steamMatches: true } });

	// The token is not shown again.
	await page.reload();
	await expect(page.getByTestId('api-token')).toHaveCount(0);
	const item = page
		.getByRole('list', { name: 'Tokens' })
		.getByRole('listitem')
		.filter({ hasText: 'Buffer skid control system' });
	await item.getByLabel('Reason for revoking').fill('The skid controller was replaced.');
	await item.getByRole('button', { name: 'Revoke' }).click();
	await expect(item).toContainText('Revoked');
	await expect(item).toContainText('The skid controller was replaced.');
	const refused = await report('2026-11-21T05:00:00Z');
	expect(refused.status()).toBe(401);
});
