import { expect, test } from '@playwright/test';
import { DEMO_PASSWORD, shot, signedInPage, signIn } from './helpers';

// API tokens for the plant (9/10 item 2): an Administrator creates one (shown once), the control
// system reports a SIP cycle with it, the Administrator revokes it with a reason, and the next
// report is refused (401). A cycle that was not saturated steam (121 °C at 1.2 bar absolute,
// IAPWS-IF97 region 4: about 104.8 °C there) is a deviation Quality finds in Waiting for me and
// dispositions with a signature.
test('an administrator creates a usage token, the plant reports with it, and after revoking it is refused', async ({
	page,
	browser
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

	const report = (startedAt: string, peakTemperatureC = 121.1, absolutePressureBar = 2.05685) =>
		page.request.post('/api/v1/equipment/XV-4203/usage', {
			headers: { authorization: `Bearer ${token}` },
			data: {
				sipCycle: {
					startedAt,
					endedAt: new Date(Date.parse(startedAt) + 40 * 60_000).toISOString(),
					peakTemperatureC,
					absolutePressureBar,
					holdMinutes: 20
				}
			}
		});
	const ok = await report('2026-11-20T05:00:00Z');
	expect(ok.status()).toBe(200);
	expect(await ok.json()).toMatchObject({ equipment: 'XV-4203', sipCycle: { steamMatches: true } });

	const off = await report('2026-11-20T09:00:00Z', 121, 1.2);
	expect(await off.json()).toMatchObject({ sipCycle: { steamMatches: false } });

	const quality = await signedInPage(browser, 'quality');
	const queue = quality.getByRole('region', { name: 'Deviations to disposition' });
	const waiting = queue.getByRole('link', { name: /XV-4203: SIP cycle not saturated steam/ });
	await expect(waiting).toBeVisible();
	await waiting.click();
	await expect(quality.getByRole('heading', { level: 1, name: /^Deviation DEV-/ })).toBeVisible();
	await expect(quality.getByText('121 °C', { exact: true })).toBeVisible();
	await expect(quality.getByText(/Steam and hot surfaces/)).toBeVisible();
	await shot(quality, 'sip-deviation');
	await quality.getByRole('button', { name: /^Disposition DEV-/ }).click();
	const dialog = quality.getByRole('dialog', { name: 'Sign: Reviewed' });
	await dialog.getByLabel('Impact possible: CAPA opened').check();
	await dialog
		.getByLabel('What was decided and why')
		.fill('Air in the steam supply: CAPA opened, batches after the cycle assessed.');
	await dialog.getByLabel('Your password').fill(DEMO_PASSWORD);
	await dialog.getByRole('button', { name: 'Sign: Reviewed' }).click();
	await expect(quality.getByText('Dispositioned', { exact: true })).toBeVisible();
	await expect(quality.getByText('Air in the steam supply')).toBeVisible();
	// The equipment shows the reported cycles, the off-steam one with its deviation.
	await quality.getByRole('link', { name: '← XV-4203' }).click();
	const cycles = quality.getByRole('region', { name: /SIP cycles reported by the plant/ });
	await expect(cycles.getByText('Not saturated steam')).toBeVisible();
	await expect(
		cycles.getByRole('link', { name: /^DEV-\d{4}-\d{4} \(dispositioned\)$/ })
	).toBeVisible();
	await expect(cycles.getByText('Saturated steam', { exact: true }).first()).toBeVisible();
	await quality.context().close();

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
