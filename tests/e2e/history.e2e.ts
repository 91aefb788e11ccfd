import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { expectNoHorizontalScroll, ownerSql, shot, signIn } from './helpers';

// A record's History (8/10 item 2, export item 5; AT1, ES3, MR2): one click from a work order,
// a step, equipment, a procedure version or an account to its events, oldest first, old → new
// with the reason, and each signature with whether it still matches its record.
test('an inspector opens a work order’s History and a step’s, sees the correction with its reason and matching signatures, and exports it', async ({
	page
}) => {
	test.setTimeout(90_000);
	await page.setViewportSize({ width: 1280, height: 900 });
	const sql = ownerSql();
	const [row] = await sql`select w.id, w.number from work_orders w
		join equipment e on e.id = w.equipment_id where e.tag = 'XV-4205'`;
	await sql.end();
	await signIn(page, 'inspector');
	await page.goto(`/work/${row!.id}`);
	await page.getByRole('link', { name: 'History', exact: true }).click();
	await expect(page).toHaveURL(`/history/work_order/${row!.id}`);
	await expect(page.getByRole('heading', { level: 1 })).toHaveText(`Work order ${row!.number}`);
	const events = page.getByRole('list', { name: 'Events, oldest first' }).getByRole('listitem');
	await expect(events.first()).toContainText('Work order planned');
	// The signature's own event (the release event names the same signature).
	const release = events
		.filter({ hasText: 'Electronic signature' })
		.filter({ hasText: 'Signature: Released' });
	await expect(release).toHaveCount(1);
	await expect(release).toContainText('Still matches the record');
	await shot(page, 'history-work-order');

	// The first step's History, from its own link on the work order.
	await page.goto(`/work/${row!.id}`);
	await page.getByRole('link', { name: 'History of step 1', exact: true }).click();
	await expect(page.getByRole('heading', { level: 1 })).toContainText('Step 1:');
	const correction = events.filter({ hasText: 'Value corrected' });
	await expect(correction).toContainText('Reason: Typing error at entry');
	const changed = correction.getByRole('row').filter({ hasText: 'surface-temperature' });
	const text = correction.getByRole('row', { name: /^text/ }).getByRole('cell');
	await expect(text).toHaveText(['18 °C', '28 °C']); // before, after
	await expect(changed).toHaveCount(1);
	await expect(events.filter({ hasText: 'Signature: Performed' }).first()).toContainText(
		'Still matches the record'
	);

	const download = page.waitForEvent('download');
	await page.getByRole('button', { name: 'CSV' }).click();
	const file = await download;
	expect(file.suggestedFilename()).toMatch(/^countersign-history-step-\d{4}-\d{2}-\d{2}\.csv$/);
	const lines = readFileSync((await file.path())!, 'utf8')
		.trimEnd()
		.split('\n');
	expect(lines.filter((l) => /^\d+,/.test(l))).toHaveLength(await events.count());
	await expect(page.getByRole('region', { name: 'Export this History' })).toContainText(
		/Exported\s+\d+ events/
	);
	await shot(page, 'history-step');

	await page.setViewportSize({ width: 390, height: 844 });
	await expectNoHorizontalScroll(page);
	await shot(page, 'history-step-phone');
});

test('a technician opens equipment’s and a procedure version’s History; an administrator an account’s', async ({
	browser
}) => {
	test.setTimeout(90_000);
	const tech = await (await browser.newContext()).newPage();
	await signIn(tech, 'tech1');
	await tech.goto('/plant');
	await tech.getByRole('link', { name: 'XV-4205' }).first().click();
	await tech.getByRole('link', { name: 'History', exact: true }).click();
	await expect(tech.getByRole('heading', { level: 1 })).toHaveText('Equipment XV-4205');
	const events = tech.getByRole('list', { name: 'Events, oldest first' }).getByRole('listitem');
	await expect(events.first()).toContainText('Equipment registered');
	await expect(events.filter({ hasText: 'Released' }).first()).toBeVisible();
	// Technicians do not export the trail (that is Quality's and the Inspector's).
	await expect(tech.getByRole('button', { name: 'CSV' })).toHaveCount(0);

	await tech.goto('/procedures');
	await tech
		.getByRole('link', { name: /MP-DV-01/ })
		.first()
		.click();
	await tech
		.getByRole('link', { name: /Version 2/ })
		.first()
		.click();
	await tech.getByRole('link', { name: 'History', exact: true }).click();
	await expect(tech.getByRole('heading', { level: 1 })).toHaveText(/^MP-DV-01 version 2$/);
	await expect(events.filter({ hasText: 'Signature: Approved' }).first()).toContainText(
		'Still matches the record'
	);
	await shot(tech, 'history-procedure-version');

	const admin = await (await browser.newContext()).newPage();
	await signIn(admin, 'admin');
	await admin.goto('/people');
	await admin.getByRole('link', { name: 'tech1', exact: true }).click();
	await admin.getByRole('link', { name: 'History', exact: true }).click();
	await expect(admin.getByRole('heading', { level: 1 })).toHaveText('Tomas Verhoek (tech1)');
	await expect(
		admin.getByRole('list', { name: 'Events, oldest first' }).getByRole('listitem').first()
	).toContainText('Account created');
	await shot(admin, 'history-account');
});
