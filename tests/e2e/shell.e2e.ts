import { expect, test } from '@playwright/test';
import { expectNoHorizontalScroll, shot, signIn } from './helpers';

// The app shell: layout at desktop, tablet and phone widths, keyboard access, print, errors.
// Screenshots land in test-results/screens/ for a person to look at. Signed in as tech1.
test.beforeEach(async ({ page }) => {
	await signIn(page, 'tech1');
	await expect(page).toHaveURL('/');
});

test.describe('home page, Waiting for me', () => {
	test('desktop (1280×800): side column with site, clock and navigation', async ({ page }) => {
		await page.setViewportSize({ width: 1280, height: 800 });
		await page.goto('/');
		await expect(page).toHaveTitle('Waiting for me · Countersign');
		await expect(page.getByRole('heading', { level: 1, name: 'Waiting for me' })).toBeVisible();

		const side = page
			.locator('aside')
			.filter({ has: page.getByRole('navigation', { name: 'Main' }) });
		await expect(side).toBeVisible();
		await expect(side.getByText('Ostmere Fill-Finish Site')).toBeVisible();
		// Site time is shown with its zone (Europe/Berlin: CET or CEST).
		await expect(side.locator('time')).toHaveText(/^\d{4}-\d{2}-\d{2} \d{2}:\d{2} CES?T$/);
		const current = side.getByRole('link', { name: 'Waiting for me', exact: true });
		await expect(current).toHaveAttribute('aria-current', 'page');
		await expect(page.locator('header')).toBeHidden();

		// A technician's queues: the demo work assigned to them, kept fresh from GET /api/v1/queues.
		const assigned = page.getByRole('region', { name: /^Work assigned to me/ });
		await expect(assigned.getByRole('link', { name: /XV-3105/ })).toBeVisible();
		await expect(page.getByRole('heading', { level: 2, name: /^Steps to verify/ })).toBeVisible();
		await expect(page.getByText(/Kept up to date · refreshed/)).toBeVisible({ timeout: 15_000 });
		await expect(page.getByRole('complementary', { name: 'Safety notice' })).toContainText(
			"the manufacturer's instructions and local codes"
		);
		await expectNoHorizontalScroll(page);
		await shot(page, 'home-desktop');
	});

	test('tablet (768×1024): header with the navigation in a row, touch-sized links', async ({
		page
	}) => {
		await page.setViewportSize({ width: 768, height: 1024 });
		await page.goto('/');
		const header = page.locator('header');
		await expect(header).toBeVisible();
		const nav = header.getByRole('navigation', { name: 'Main' });
		await expect(nav.getByRole('link', { name: 'Plant' })).toBeVisible();
		for (const link of await nav.getByRole('link').all()) {
			const box = await link.boundingBox();
			expect(box!.height).toBeGreaterThanOrEqual(44);
		}
		await expectNoHorizontalScroll(page);
		await shot(page, 'home-tablet');
	});

	test('tablet landscape (1024×768) and phone (390×844) do not scroll sideways', async ({
		page
	}) => {
		for (const [width, height, name] of [
			[1024, 768, 'home-tablet-landscape'],
			[390, 844, 'home-phone']
		] as const) {
			await page.setViewportSize({ width, height });
			await page.goto('/');
			await expect(page.getByRole('heading', { level: 1, name: 'Waiting for me' })).toBeVisible();
			await expectNoHorizontalScroll(page);
			await shot(page, name);
		}
	});

	test('keyboard: the first Tab offers "Skip to content", which moves focus to the page', async ({
		page
	}) => {
		await page.setViewportSize({ width: 1280, height: 800 });
		await page.goto('/');
		await page.keyboard.press('Tab');
		const skip = page.getByRole('link', { name: 'Skip to content' });
		await expect(skip).toBeFocused();
		await page.keyboard.press('Enter');
		await expect(page).toHaveURL(/#main$/);
		await expect(page.locator('main')).toBeFocused();
	});

	test('print: navigation is left out, the page content and a generated-at line stay', async ({
		page
	}) => {
		await page.setViewportSize({ width: 1280, height: 800 });
		await page.goto('/');
		await page.emulateMedia({ media: 'print' });
		await expect(page.getByRole('navigation', { name: 'Main' })).toBeHidden();
		await expect(page.getByRole('heading', { level: 1, name: 'Waiting for me' })).toBeVisible();
		await expect(
			page.getByText(/Countersign · Ostmere Fill-Finish Site · page generated/)
		).toBeVisible();
		await shot(page, 'home-print');
	});
});

test('Plant lists the demo site’s buildings and areas with grades in words, below the register', async ({
	page
}) => {
	await page.setViewportSize({ width: 1280, height: 800 });
	await page.goto('/');
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Plant' }).click();
	await expect(page).toHaveURL('/plant');
	await expect(page.getByRole('heading', { level: 1, name: 'Plant' })).toBeVisible();
	await page.getByText('Buildings and areas').click();
	for (const building of [
		'B10 · Sterile filling',
		'B20 · Bulk biologics',
		'B30 · Clean utilities'
	]) {
		await expect(page.getByRole('heading', { level: 2, name: building })).toBeVisible();
	}
	const filling = page.getByRole('table', { name: 'Areas of Sterile filling' });
	await expect(filling.getByRole('columnheader')).toHaveText(['Area', 'Name', 'Cleanroom grade']);
	await expect(filling.getByRole('row', { name: /FIL-1A/ })).toContainText('Grade A');
	await expect(
		page.getByRole('table', { name: 'Areas of Clean utilities' }).getByRole('row', { name: /WFI/ })
	).toContainText('Controlled, not classified');
	await expectNoHorizontalScroll(page);
	await shot(page, 'plant-desktop');
});

test('an unknown page shows an error id and no stack', async ({ page }) => {
	await page.setViewportSize({ width: 1280, height: 800 });
	const response = await page.goto('/no-such-page');
	expect(response?.status()).toBe(404);
	await expect(page.getByRole('heading', { level: 1, name: 'Nothing here' })).toBeVisible();
	await expect(page.getByText(/quote the error id/)).toBeVisible();
	const text = await page.locator('body').innerText();
	expect(text).not.toMatch(/\bat .+:\d+:\d+|Error: |node_modules/);
	await expect(page.getByRole('link', { name: 'Back to Waiting for me' })).toBeVisible();
	await shot(page, 'error-404');
});

test('API routes answer JSON, never HTML', async ({ playwright }) => {
	const request = await playwright.request.newContext({ baseURL: test.info().project.use.baseURL });
	const health = await request.get('/api/v1/health');
	expect(health.status()).toBe(200);
	expect(await health.json()).toEqual({ status: 'ok', db: 'ok', storage: 'ok', mail: 'ok' });

	const missing = await request.get('/api/v1/no-such-route', { headers: { accept: 'text/html' } });
	expect(missing.status()).toBe(404);
	expect(missing.headers()['content-type']).toContain('application/json');

	const wrongMethod = await request.post('/api/v1/health');
	expect(wrongMethod.status()).toBe(405);
	expect(wrongMethod.headers()['content-type']).toContain('application/json');
});
