import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { expectNoHorizontalScroll, ownerSql, shot, signIn } from './helpers';

// The Access review (8/10 item 6; AC5 a recertification report lists users, roles, last
// sign-in; AC3 the access list exports users and roles): an inspector opens it from the
// navigation, sees the demo people with their roles, changes the period, downloads the roles
// CSV and reads it; on a desktop and on a 390 px phone.
const demo = ['tech1', 'tech2', 'planner', 'quality', 'inspector', 'admin'];

test('AC5 AC3: an inspector reviews who holds which roles, changes the period and exports the roles CSV', async ({
	page
}) => {
	test.setTimeout(90_000);
	await page.setViewportSize({ width: 1280, height: 900 });
	await signIn(page, 'inspector');
	await page
		.getByRole('navigation', { name: 'Main' })
		.getByRole('link', { name: 'Access review' })
		.click();
	await expect(page).toHaveURL('/access-review');
	await expect(page.getByRole('heading', { level: 1, name: 'Access review' })).toBeVisible();

	const sql = ownerSql();
	const people = (await sql`select id, username, full_name, roles from accounts
		where username in ${sql(demo)} order by username`) as unknown as {
		id: string;
		username: string;
		full_name: string;
		roles: string[];
	}[];
	await sql.end();
	expect(people).toHaveLength(demo.length);

	// Each demo person is a row of the roles table, named with a link to the account's History.
	const roles = page.getByRole('table', { name: 'Who holds which roles' });
	for (const p of people) {
		const row = roles.getByRole('row').filter({ has: page.getByText(p.username, { exact: true }) });
		await expect(row).toHaveCount(1);
		await expect(row.getByRole('link', { name: p.full_name })).toHaveAttribute(
			'href',
			`/access-review/${p.id}`
		);
		for (const role of p.roles) await expect(row).toContainText(new RegExp(role, 'i'));
		await expect(row).toContainText(/since\s+\d{4}-\d{2}-\d{2} \d{2}:\d{2} CES?T/);
		await expect(row).toContainText(/\d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC/);
	}
	// The inspector has just signed in: the last sign-in is there, in site time.
	await expect(
		roles.getByRole('row').filter({ has: page.getByText('inspector', { exact: true }) })
	).not.toContainText(/never/i);
	const changes = page.getByRole('table', { name: /^Role changes from/ });
	await expect(
		changes.getByRole('row').filter({ hasText: 'Account created' }).first()
	).toBeVisible();
	await shot(page, 'access-review');

	// The period: from and to in the address; the changes table says which period it shows.
	const today = new Date().toISOString().slice(0, 10);
	await page.getByLabel('From (UTC date)').fill('2026-01-01');
	await page.getByLabel('To (UTC date)').fill(today);
	await page.getByRole('button', { name: 'Show this period' }).click();
	await expect(page).toHaveURL(`/access-review?from=2026-01-01&to=${today}`);
	await expect(
		page.getByRole('heading', { name: `Role changes from 2026-01-01 to ${today}` })
	).toBeVisible();

	// A period that starts after it ends is said on the page, and the form is still there.
	await page.getByLabel('From (UTC date)').fill('2026-12-05');
	await page.getByLabel('To (UTC date)').fill('2026-12-01');
	await page.getByRole('button', { name: 'Show this period' }).click();
	await expect(page.getByRole('alert')).toHaveText(
		'The period starts after it ends: from (2026-12-05) is later than to (2026-12-01).'
	);
	await expect(page.getByLabel('From (UTC date)')).toHaveValue('2026-12-05');
	await page.goto(`/access-review?from=2026-01-01&to=${today}`);

	// The roles CSV: one row per account and role, the demo people among them.
	const download = page.waitForEvent('download');
	await page.getByRole('link', { name: 'Roles (CSV)' }).click();
	const file = await download;
	expect(file.suggestedFilename()).toBe(`countersign-access-roles-2026-01-01-to-${today}.csv`);
	const lines = readFileSync((await file.path())!, 'utf8')
		.trimEnd()
		.split('\n');
	expect(lines[0]).toBe(
		'account_id,username,full_name,email,status,role,since,granted_by,grant_reason,grant_seq,last_sign_in_at,created_at,locked_at,deactivated_at,flags'
	);
	for (const p of people)
		for (const role of p.roles)
			expect(
				lines.some((l) => l.startsWith(`${p.id},${p.username},`) && l.includes(`,${role},`)),
				`${p.username} ${role}`
			).toBe(true);

	await expectNoHorizontalScroll(page);
	await page.emulateMedia({ media: 'print' });
	await expect(page.getByRole('button', { name: 'Print' })).toBeHidden();
	await expect(page.getByRole('navigation', { name: 'Main' })).toBeHidden();
	await shot(page, 'access-review-print');
	await page.emulateMedia({ media: 'screen' });

	// A phone: each account is a card (the table would need scrolling sideways).
	await page.setViewportSize({ width: 390, height: 844 });
	const cards = page.getByRole('list', { name: 'Who holds which roles' });
	await expect(cards).toBeVisible();
	for (const p of people)
		await expect(cards.getByRole('link', { name: p.full_name })).toHaveAttribute(
			'href',
			`/access-review/${p.id}`
		);
	await expectNoHorizontalScroll(page);
	await shot(page, 'access-review-phone');
});

test('AC5: a technician has no Access review: no link, and the page answers 403', async ({
	page
}) => {
	await signIn(page, 'tech1');
	await expect(
		page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Access review' })
	).toHaveCount(0);
	const response = await page.goto('/access-review');
	expect(response?.status()).toBe(403);
});
