import { expect, test } from '@playwright/test';
import { expectNoHorizontalScroll, ownerSql, shot, signIn } from './helpers';

// PM schedules (9/10 item 1): the Planner sees what is overdue and due soon, the next 12 weeks,
// and plans a new schedule; a bad schedule is refused beside its field, nothing stored. The
// demo's schedules start relative to the day of seeding (src/lib/server/db/demo/schedules.ts),
// and the server's scheduler is off in the browser tests, so the lists are as seeded.
test('a Planner reads the overdue and due-soon lists and the 12-week calendar, and plans a schedule', async ({
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
	await expect(page.getByRole('list', { name: 'Overdue' })).toContainText('XV-3104');
	await expect(page.getByRole('list', { name: 'Due and due soon' })).toContainText('XV-3106');
	await expect(page.getByRole('list', { name: 'Due and due soon' })).toContainText(
		'no work order yet'
	);
	const weeks = page
		.getByRole('list', { name: 'Weeks' })
		.getByRole('listitem')
		.filter({
			has: page.getByRole('heading')
		});
	await expect(weeks).toHaveCount(12);
	await expect(page.getByRole('list', { name: 'Weeks' })).toContainText('XV-4203');
	await shot(page, 'pm-schedules');
	await page.setViewportSize({ width: 820, height: 1100 });
	await expectNoHorizontalScroll(page);
	await shot(page, 'pm-schedules-tablet');
	await page.setViewportSize({ width: 1280, height: 900 });

	// A schedule without a procedure is refused beside the field; nothing is stored.
	const sql = ownerSql();
	const count = async () => Number((await sql`select count(*)::int as n from pm_schedules`)[0]!.n);
	const before = await count();
	const [pump] = await sql`select id from equipment where tag = 'P-3102'`;
	const [seal] = await sql`select id from procedures where code = 'MP-PU-01'`;
	await page.getByRole('link', { name: 'New schedule' }).click();
	await page.getByLabel('Title', { exact: true }).fill('Pump seal P-3102');
	await page.getByLabel('Equipment', { exact: true }).selectOption(pump!.id as string);
	await page.getByRole('button', { name: 'Plan the schedule' }).click();
	await expect(page.getByText('Choose the procedure.')).toBeVisible();
	expect(await count()).toBe(before);
	await page.getByLabel('Procedure', { exact: true }).selectOption(seal!.id as string);
	await page.getByLabel('Every', { exact: true }).fill('6');
	await page.getByLabel('Limit', { exact: true }).fill('400');
	await page.getByLabel('Counting').selectOption('operating_hours');
	await shot(page, 'pm-new');
	await page.getByRole('button', { name: 'Plan the schedule' }).click();
	await expect(page).toHaveURL('/pm');
	const planned = page
		.getByRole('list', { name: 'Schedules' })
		.getByRole('listitem')
		.filter({ hasText: 'Pump seal P-3102' })
		.first();
	await expect(planned).toContainText('every 6 months or 400 operating hours, whichever first');
	expect(await count()).toBe(before + 1);
	const [event] = await sql`select actor_name, new_values from audit_event
		where action = 'pm_schedule.create' order by seq desc limit 1`;
	await sql.end();
	expect(event).toMatchObject({ actor_name: 'Priya Lindqvist', new_values: { usageLimit: 400 } });

	// The schedule's page: a change needs its reason and a change; a pause is a new version.
	await planned.getByRole('link', { name: 'Pump seal P-3102' }).click();
	await expect(page.getByRole('heading', { level: 1, name: 'Pump seal P-3102' })).toBeVisible();
	await expect(page.getByRole('region', { name: /^Equipment \(1\)/ })).toContainText('P-3102');
	await page.getByRole('button', { name: 'Save the change' }).click();
	await expect(page.getByText('Give the reason for the change.')).toBeVisible();
	await page.getByLabel('Reason for the change').fill('Seal supplier changed');
	await page.getByRole('button', { name: 'Save the change' }).click();
	await expect(page.getByText(/Nothing is changed/)).toBeVisible();
	await page.getByLabel('Active: makes work orders when they fall due').uncheck();
	await page.getByLabel('Reason for the change').fill('Pump out of service for the shutdown');
	await page.getByRole('button', { name: 'Save the change' }).click();
	await expect(page.getByText(/Saved as version 2: the schedule is paused/)).toBeVisible();
	await expect(page.getByRole('heading', { level: 1 })).toContainText('(paused)');
	await expect(page.getByRole('region', { name: 'Versions' })).toContainText(
		'Pump out of service for the shutdown'
	);
	await shot(page, 'pm-schedule');

	await page.setViewportSize({ width: 390, height: 844 });
	await page.goto('/pm');
	await expectNoHorizontalScroll(page);
	await shot(page, 'pm-schedules-phone');
});

test('a technician reads the PM schedules but cannot plan one', async ({ page }) => {
	await signIn(page, 'tech1');
	await page.goto('/pm');
	await expect(page.getByRole('heading', { name: 'PM schedules', level: 1 })).toBeVisible();
	await expect(page.getByRole('link', { name: 'New schedule' })).toHaveCount(0);
	const response = await page.goto('/pm/new');
	expect(response?.status()).toBe(403);
});
