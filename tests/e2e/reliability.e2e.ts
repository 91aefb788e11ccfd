import { expect, test, type Page } from '@playwright/test';
import { expectNoHorizontalScroll, shot, signIn } from './helpers';

// Diaphragm life (9/10 item 6): a Planner goes from the PM schedules (the 12-week calendar) to
// Diaphragm life, sees the reliability plot drawn, its summary and the suggested PM interval,
// changes the reliability, the group and the unit, and the page fits a tablet and a phone and
// prints with its plot. The demo history is src/lib/server/db/demo/reliability.ts (invented);
// other browser tests may release diaphragm jobs meanwhile, so figures are not pinned here (the
// integration test checks them).

const plot = (page: Page) => page.locator('canvas[aria-label^="Reliability plot"]');

/** The plot is drawn: Chart.js has run and painted a good part of the canvas. */
async function expectDrawn(page: Page) {
	await expect(plot(page)).toHaveAttribute('data-drawn', 'yes');
	const painted = await plot(page).evaluate((c: HTMLCanvasElement) => {
		const data = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
		let n = 0;
		for (let i = 3; i < data.length; i += 4) if (data[i]! > 0) n++;
		return n;
	});
	expect(painted).toBeGreaterThan(5000);
}

test('a Planner goes from the 12-week calendar to Diaphragm life, reads the plot and the suggested interval, and changes reliability, group and unit', async ({
	page
}) => {
	test.setTimeout(90_000);
	await page.setViewportSize({ width: 1280, height: 900 });
	await signIn(page, 'planner');
	await page
		.getByRole('navigation', { name: 'Main' })
		.getByRole('link', { name: 'PM schedules' })
		.click();
	await expect(page).toHaveURL('/pm');
	await expect(
		page
			.getByRole('list', { name: 'Weeks' })
			.getByRole('listitem')
			.filter({ has: page.getByRole('heading') })
	).toHaveCount(12);

	await page.getByRole('link', { name: 'Diaphragm life' }).click();
	await expect(page).toHaveURL('/pm/reliability');
	await expect(page.getByRole('heading', { name: 'Diaphragm life', level: 1 })).toBeVisible();
	// By default the first group that can be fitted: the EPDM valves.
	await expect(page.getByRole('heading', { level: 2 })).toHaveText('Diaphragm valve · DM-EPDM-70');
	await expectDrawn(page);
	await expect(plot(page)).toHaveAttribute('aria-label', /failed \(dots/);
	await expect(page.getByTestId('plot-summary')).toContainText(
		'The line is the fitted Weibull reliability R(t)'
	);
	await expect(
		page.getByRole('heading', { name: 'Suggested PM interval at 90 % reliability' })
	).toBeVisible();
	const at90 = await page.getByTestId('suggested-interval').innerText();
	expect(at90).toMatch(/^[\d.]+ SIP cycles \(likely between [\d.]+ and [\d.]+\)$/);
	await expect(page.getByText(/90 % of diaphragms are expected to last at least/)).toBeVisible();
	await expect(page.getByText(/An aid to planning, not a decision/)).toBeVisible();
	await expect(page.getByRole('table', { name: /Diaphragm lives of/ })).toContainText(
		'Paper logbook'
	);
	await shot(page, 'reliability');

	// A higher reliability: a shorter interval.
	await page.getByLabel('Reliability', { exact: true }).selectOption('99');
	await page.getByRole('button', { name: 'Show' }).click();
	await expect(page).toHaveURL(/reliability=99/);
	await expect(
		page.getByRole('heading', { name: 'Suggested PM interval at 99 % reliability' })
	).toBeVisible();
	const at99 = await page.getByTestId('suggested-interval').innerText();
	expect(Number(at99.split(' ')[0])).toBeLessThan(Number(at90.split(' ')[0]));
	await expectDrawn(page);

	// The other material, in days.
	await page.getByLabel('Equipment class and material').selectOption('diaphragm_valve:DM-PTFE-2P');
	await page.getByLabel('Life counted in', { exact: true }).selectOption('days');
	await page.getByLabel('Reliability', { exact: true }).selectOption('90');
	await page.getByRole('button', { name: 'Show' }).click();
	await expect(page).toHaveURL(/unit=days/);
	await expect(page.getByRole('heading', { level: 2 })).toHaveText('Diaphragm valve · DM-PTFE-2P');
	await expect(page.getByTestId('suggested-interval')).toContainText('days');
	await expectDrawn(page);
	await shot(page, 'reliability-ptfe-days');

	await page.setViewportSize({ width: 820, height: 1100 });
	await expectNoHorizontalScroll(page);
	await expectDrawn(page);
	await shot(page, 'reliability-tablet');
	await page.setViewportSize({ width: 390, height: 844 });
	await expectNoHorizontalScroll(page);
	await expectDrawn(page);
	await shot(page, 'reliability-phone');

	// Printed: the plot stays, the chooser and the navigation go.
	await page.setViewportSize({ width: 1280, height: 900 });
	await page.emulateMedia({ media: 'print' });
	await expect(plot(page)).toBeVisible();
	await expect(page.getByRole('button', { name: 'Show' })).toBeHidden();
	const box = await plot(page).boundingBox();
	expect(box!.height).toBeGreaterThan(200);
	await shot(page, 'reliability-print');
	// And on paper (A4), to look at: the plot is on the first page.
	await page.pdf({ path: 'test-results/screens/reliability.pdf', format: 'A4' });
	await page.emulateMedia({ media: 'screen' });
});

test('an address the page cannot read gets a plain message and the chooser, never an error page', async ({
	page
}) => {
	await signIn(page, 'tech1');
	const response = await page.goto('/pm/reliability?reliability=97&unit=weeks');
	expect(response?.status()).toBe(200);
	await expect(page.getByRole('alert')).toHaveText(
		'The reliability must be one of 80, 90, 95, 99 %; “97” is not.'
	);
	await expect(page.getByLabel('Equipment class and material')).toBeVisible();
	await expect(plot(page)).toHaveCount(0);
	// Choosing again from the list shows the group.
	await page.getByLabel('Equipment class and material').selectOption('diaphragm_valve:DM-EPDM-70');
	await page.getByRole('button', { name: 'Show' }).click();
	await expectDrawn(page);
});
