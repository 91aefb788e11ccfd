import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { expectNoHorizontalScroll, ownerSql, shot, signIn } from './helpers';

// The Audit trail browser (8/10 item 1; AT1, AT6): Quality and Inspector read the trail with
// times in site time, filter it (the filters live in the address), open an event to see its old
// and new values with the reason, page with the cursor, check the chain, and export.
test('an inspector filters the trail to one work order, opens an event, pages, checks the chain and exports', async ({
	page
}) => {
	test.setTimeout(90_000);
	await page.setViewportSize({ width: 1280, height: 900 });
	await signIn(page, 'inspector');
	await page
		.getByRole('navigation', { name: 'Main' })
		.getByRole('link', { name: 'Audit trail' })
		.click();
	await expect(page).toHaveURL('/audit');
	const list = page.getByRole('list', { name: 'Events, newest first' });
	// The inspector's own sign-in is among the newest events, with the time in site time and zone.
	const signInEvent = list
		.getByRole('listitem')
		.filter({ hasText: 'auth.sign_in' })
		.filter({ hasText: 'Iris Moravec' })
		.first();
	await expect(signInEvent).toContainText(/\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} CES?T/);
	await expect(list.getByRole('listitem')).toHaveCount(50);

	// One work order: the released demo record of XV-4205, by its tag's work order number.
	const sql = ownerSql();
	const [row] =
		await sql`select w.number from work_orders w join equipment e on e.id = w.equipment_id
		where e.tag = 'XV-4205'`;
	await sql.end();
	const number = row!.number as string;
	await page.goto('/audit');
	await page.getByLabel('Work order').fill(number);
	await page.getByRole('button', { name: 'Apply the filters' }).click();
	await expect(page).toHaveURL(new RegExp(`workOrder=${number}`));
	await expect(list.getByRole('listitem').first()).toBeVisible();
	// Every event shown is of that work order (its id, or one of its steps) once the filtered view
	// has arrived (until then the unfiltered list is still shown: this waits for it).
	const entries = list.getByRole('listitem');
	await expect(
		entries.filter({ hasNotText: /work_order|signature|deviation|evidence|equipment/ })
	).toHaveCount(0);
	const n = await entries.count();
	expect(n).toBeGreaterThan(5);
	for (const text of await entries.allTextContents())
		expect(text).toMatch(/work_order|signature|deviation|evidence|equipment/);

	// This view as CSV, with its progress; the file holds the same events, oldest first.
	const csv = page.waitForEvent('download');
	await page.getByRole('button', { name: 'CSV' }).click();
	const file = await csv;
	expect(file.suggestedFilename()).toMatch(/^countersign-audit-view-\d{4}-\d{2}-\d{2}\.csv$/);
	const rows = readFileSync((await file.path())!, 'utf8').split('\n');
	expect(rows[0]).toBe(
		'seq,at,actor_kind,actor_id,actor_name,actor_roles,action,entity_type,entity_id,reason,new_values,previous_values,client_address,prev_hash,hash'
	);
	await expect(page.getByRole('region', { name: 'Export this view' })).toContainText(
		/Exported\s+\d+ events \(up to event (\d+) of \1\)/
	);
	await shot(page, 'audit-export-view');
	expect(rows.filter((r) => /^\d+,/.test(r)).length).toBeGreaterThanOrEqual(n);

	// A corrected entry: old and new values side by side, with the reason.
	await page.getByLabel('Text in reasons and values').fill('Typing error at entry');
	await page.getByRole('button', { name: 'Apply the filters' }).click();
	// The new view has arrived (until then the previous view's list is still shown).
	await expect(page).toHaveURL(/q=Typing/);
	await expect(page.locator('section[aria-labelledby="events-title"]')).toHaveAttribute(
		'aria-busy',
		'false'
	);
	const corrected = list
		.getByRole('listitem')
		.filter({ hasText: 'work_order.entry_correct' })
		.first();
	await corrected.locator('summary').click();
	await expect(corrected.getByRole('heading', { name: 'Previous values' })).toBeVisible();
	await expect(corrected.getByRole('heading', { name: 'New values' })).toBeVisible();
	await expect(corrected).toContainText('Reason: Typing error at entry');
	await expect(corrected).toContainText(/Inspector|Quality|Technician/);
	await expect(corrected).toContainText(/ UTC/);
	await expect(corrected.getByText(/^[0-9a-f]{64}$/).first()).toBeVisible();
	await shot(page, 'audit-filtered-event');

	// The cursor pages through the whole trail: the second page starts below the first.
	await page.goto('/audit');
	await expect(list.getByRole('listitem')).toHaveCount(50);
	const firstSeq = Number(
		(await list.getByRole('listitem').last().locator('summary span').first().textContent())!.slice(
			1
		)
	);
	await page.getByRole('link', { name: 'Older events' }).click();
	await expect(page).toHaveURL(/after=\d+/);
	// The next page starts right below the last event of the first (the list shows the old page
	// until the new one has arrived, so wait for it).
	await expect(list.getByRole('listitem').first().locator('summary span').first()).toHaveText(
		`#${firstSeq - 1}`
	);

	// A wrong filter in the address says what is wrong instead of showing nothing.
	await page.goto('/audit?limit=5000');
	await expect(page.getByRole('alert')).toHaveText('limit is a whole number from 1 to 200.');

	await page.goto('/audit');
	await page.getByRole('button', { name: 'Check the chain' }).click();
	await expect(page.getByText(/Intact: all \d+ events verify\./)).toBeVisible();
	await shot(page, 'audit-trail');

	const download = page.waitForEvent('download');
	await page.getByRole('link', { name: 'Export the whole trail (JSON Lines)' }).click();
	expect((await download).suggestedFilename()).toMatch(
		/^countersign-audit-trail-\d{4}-\d{2}-\d{2}\.jsonl$/
	);
	await page.setViewportSize({ width: 820, height: 1180 });
	await expectNoHorizontalScroll(page);
	await shot(page, 'audit-trail-tablet');
});

test('a technician has no Audit trail: no link, and the page answers 403', async ({ page }) => {
	await signIn(page, 'tech1');
	await expect(
		page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' })
	).toHaveCount(0);
	const response = await page.goto('/audit');
	expect(response?.status()).toBe(403);
});
