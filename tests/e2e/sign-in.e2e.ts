import { expect, test } from '@playwright/test';
import {
	createAccountAsAdmin,
	mailsAt,
	ownerSql,
	readyAccount,
	shot,
	signedInPage,
	signIn,
	uniqueUsername
} from './helpers';

// Sign-in, roles, sessions and account administration in Chromium (issue 2/10).
// REQUIREMENTS: AC1 (server-side permissions), AC6 (deactivation at once), SE5 (lockout),
// SE7 (idle timeout), SE8 (sign-out invalidates on the server), ES6 (one-time password).

const master = ['Plant', 'Procedures', 'Instruments', 'Parts and lots', 'Qualifications'];
const pagesByRole: Record<string, { sees: string[]; forbidden: string[] }> = {
	tech1: {
		sees: ['Waiting for me', 'Work', 'PM schedules', ...master],
		forbidden: ['/people', '/audit', '/plant/new', '/work/new']
	},
	planner: { sees: ['Waiting for me', 'Work', 'PM schedules', ...master], forbidden: ['/people'] },
	quality: {
		sees: ['Waiting for me', 'Work', 'PM schedules', ...master, 'Audit trail', 'Access review'],
		forbidden: ['/people', '/procedures/new', '/work/new']
	},
	inspector: {
		sees: ['Waiting for me', 'Work', 'PM schedules', ...master, 'Audit trail', 'Access review'],
		forbidden: ['/people', '/people/new', '/instruments/new', '/work/new']
	},
	admin: {
		sees: ['Waiting for me', 'People and access', 'Access review'],
		forbidden: ['/plant', '/audit', '/procedures', '/qualifications', '/work']
	}
};

test.describe('each demo role', () => {
	for (const [username, { sees, forbidden }] of Object.entries(pagesByRole)) {
		test(`${username} sees only its pages; others answer 403`, async ({ page }) => {
			await page.setViewportSize({ width: 1280, height: 800 });
			await signIn(page, username);
			await expect(page).toHaveURL('/');
			const nav = page.getByRole('navigation', { name: 'Main' });
			await expect(nav.getByRole('link')).toHaveText(sees);
			await shot(page, `home-${username}`);
			for (const path of forbidden) {
				const response = await page.goto(path);
				expect(response?.status(), path).toBe(403);
				await expect(page.getByRole('heading', { level: 1 })).toHaveText(/roles do not allow/);
			}
		});
	}
});

test('an anonymous visitor is sent to sign in, and comes back to the page asked for', async ({
	page
}) => {
	await page.goto('/plant');
	await expect(page).toHaveURL('/login?callbackUrl=%2Fplant');
	await shot(page, 'login');
	await page.getByLabel('Username').fill('planner');
	await page.getByLabel('Password').fill('lantern-harbour-orbit');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL('/plant');
});

test('a wrong password says so beside the form, keeps the username, and never answers 500', async ({
	page
}) => {
	await page.goto('/login');
	await page.getByLabel('Username').fill('quality');
	await page.getByLabel('Password').fill('not the password at all');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByRole('alert')).toHaveText('Username or password is incorrect.');
	await expect(page.getByLabel('Username')).toHaveValue('quality');
	await expect(page.getByLabel('Password')).toHaveValue('');

	// Empty fields: a message beside each, nothing sent to the sign-in check.
	await page.getByLabel('Username').fill('');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByText('Enter your username.')).toBeVisible();
	await expect(page.getByText('Enter your password.')).toBeVisible();
	await shot(page, 'login-errors');
});

test('sign-out ends the session on the server: the old cookie no longer works', async ({
	page,
	context
}) => {
	await signIn(page, 'tech2');
	await expect(page).toHaveURL('/');
	const cookies = await context.cookies();
	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page).toHaveURL('/login?signedOut=1');
	await expect(page.getByRole('status')).toHaveText('You are signed out.');

	await context.addCookies(cookies); // replay the cookie from before sign-out
	await page.goto('/plant');
	await expect(page).toHaveURL(/\/login\?callbackUrl=/);
});

test('an idle session ends on the next request', async ({ page }) => {
	await signIn(page, 'inspector');
	await expect(page).toHaveURL('/');
	await page.waitForLoadState('networkidle'); // no request of the home page still in flight
	// Sixteen minutes pass without a request (the idle limit is 15): move the session's last request back.
	const sql = ownerSql();
	await sql`update sessions set last_seen_at = now() - interval '16 minutes'
		where ended_at is null and account_id = (select id from accounts where username = 'inspector')`;
	const [ended] =
		await sql`select count(*)::int as n from sessions s join accounts a on a.id = s.account_id
		where a.username = 'inspector' and s.end_reason = 'idle'`;
	await page.goto('/plant');
	await expect(page).toHaveURL(/\/login\?callbackUrl=%2Fplant/);
	const [after] =
		await sql`select count(*)::int as n from sessions s join accounts a on a.id = s.account_id
		where a.username = 'inspector' and s.end_reason = 'idle'`;
	await sql.end();
	expect(after!.n).toBe(ended!.n + 1);
});

test('a new account: one-time password, forced change at first sign-in, then its own password', async ({
	browser
}) => {
	test.setTimeout(90_000); // a whole journey: bad input, create, first sign-in, password change
	const admin = await signedInPage(browser, 'admin');
	// Bad input first: every message stands beside its field, and nothing is created.
	await admin.goto('/people/new');
	await admin.getByLabel('Username').fill('No Spaces Allowed');
	await admin.getByLabel('E-mail').fill('not-an-address');
	await admin.getByRole('button', { name: 'Create the account' }).click();
	await expect(admin.getByText(/2–32 characters: lowercase letters/).last()).toBeVisible();
	await expect(
		admin.getByText('Enter the person’s full name as it should print on signatures.')
	).toBeVisible();
	await expect(admin.getByText('Enter an e-mail address such as name@example.org.')).toBeVisible();
	await expect(admin.getByText('Choose at least one role.')).toBeVisible();
	await shot(admin, 'people-new-errors');
	// A username that exists already (never reused, ES5).
	await admin.getByLabel('Username').fill('tech1');
	await admin.getByLabel('Full name').fill('Someone Else');
	await admin.getByLabel('E-mail').fill('someone@ostmere.example');
	await admin.getByRole('checkbox', { name: /^Technician/ }).check();
	await admin.getByRole('button', { name: 'Create the account' }).click();
	await expect(admin.getByText(/This username has been used before/)).toBeVisible();

	const username = uniqueUsername('e2e-new');
	const oneTime = await createAccountAsAdmin(admin, {
		username,
		fullName: 'Nadia Firth',
		roles: ['Technician']
	});
	await shot(admin, 'people-new-created');

	const person = await (await browser.newContext()).newPage();
	await signIn(person, username, oneTime);
	await expect(person).toHaveURL('/account?required=1');
	await expect(person.getByRole('alert')).toContainText('Choose a new password before you go on.');
	await person.goto('/plant'); // nothing else opens until the password is changed
	await expect(person).toHaveURL('/account?required=1');

	// A rule is broken: the message stands beside the field.
	await person.getByLabel('Current password').fill(oneTime);
	await person.getByLabel('New password', { exact: true }).fill('short one');
	await person.getByLabel('New password again').fill('short one');
	await person.getByRole('button', { name: 'Change password' }).click();
	await expect(person.getByText(/Use at least 15 characters \(this has 9\)/)).toBeVisible();
	await shot(person, 'account-password-rule');

	await person.getByLabel('Current password').fill(oneTime);
	await person
		.getByLabel('New password', { exact: true })
		.fill('copper kettle by the north window');
	await person.getByLabel('New password again').fill('copper kettle by the north window');
	await person.getByRole('button', { name: 'Change password' }).click();
	await expect(person).toHaveURL('/login?changed=1');
	await signIn(person, username, 'copper kettle by the north window');
	await expect(person).toHaveURL('/');
});

test('five failed sign-ins lock the account; an administrator unlocks it with a reason', async ({
	browser,
	page
}) => {
	test.setTimeout(90_000); // a whole journey: create, first sign-in, password change, …
	const admin = await signedInPage(browser, 'admin');
	const username = uniqueUsername('e2e-lock');
	const password = await readyAccount(browser, admin, {
		username,
		fullName: 'Oskar Hale',
		roles: ['Planner']
	});

	for (let i = 1; i <= 4; i++) {
		await signIn(page, username, `wrong guess number ${i}`);
		await expect(page.getByRole('alert')).toHaveText('Username or password is incorrect.');
	}
	await signIn(page, username, 'wrong guess number 5');
	await expect(page.getByRole('alert')).toContainText('This account is locked');
	await signIn(page, username, password); // the right password no longer helps
	await expect(page.getByRole('alert')).toContainText('This account is locked');
	await shot(page, 'login-locked');
	// The Administrators are told by e-mail (ES7), with a link to the account.
	const subject = `Account ${username} is locked after failed passwords`;
	await expect
		.poll(async () => (await mailsAt()).filter((m) => m.subject === subject).map((m) => m.rcpt), {
			timeout: 20_000
		})
		.toContain('admin@ostmere.example');
	const told = (await mailsAt()).find((m) => m.subject === subject)!;
	expect(told.text).toMatch(/5 consecutive failed passwords/);
	expect(told.text).toMatch(new RegExp(`Open the account: http://[^ ]+/people/[0-9a-f-]{36}`));

	await admin.goto('/');
	await expect(admin.getByRole('region', { name: /Locked accounts/ })).toContainText(username);
	await admin.getByRole('link', { name: new RegExp(username) }).click();
	await expect(admin.locator('main p').getByText('Locked', { exact: true })).toBeVisible();
	const unlock = admin.getByRole('region', { name: 'Unlock' });
	await unlock.getByRole('button', { name: 'Unlock the account' }).click();
	await expect(unlock.getByText('Give a reason: it is kept in the audit trail.')).toBeVisible();
	await unlock
		.getByLabel('Reason for the change')
		.fill('Confirmed by phone that the person mistyped.');
	await unlock.getByRole('button', { name: 'Unlock the account' }).click();
	await expect(admin.getByRole('status').filter({ hasText: 'Account unlocked.' })).toBeVisible();
	await shot(admin, 'people-detail-unlocked');

	await signIn(page, username, password);
	await expect(page).toHaveURL('/');
});

test('deactivation ends the person’s session at their very next request', async ({ browser }) => {
	test.setTimeout(90_000); // a whole journey: create, first sign-in, password change, …
	const admin = await signedInPage(browser, 'admin');
	const username = uniqueUsername('e2e-deact');
	const password = await readyAccount(browser, admin, {
		username,
		fullName: 'Lena Brask',
		roles: ['Quality']
	});
	const person = await signedInPage(browser, username, password);
	await expect(person.getByRole('heading', { name: 'Waiting for me' })).toBeVisible();

	await admin.goto('/people');
	await admin.getByRole('link', { name: username, exact: true }).click();
	const deactivate = admin.getByRole('region', { name: 'Deactivate' });
	await deactivate.getByLabel('Reason for the change').fill('Left the company.');
	await deactivate.getByRole('button', { name: 'Deactivate the account' }).click();
	await expect(admin.getByRole('heading', { level: 1 })).toContainText(username);
	await expect(admin.getByText('Deactivated', { exact: true }).first()).toBeVisible();

	await person.goto('/plant');
	await expect(person).toHaveURL(/\/login/);
	await signIn(person, username, password);
	await expect(person.getByRole('alert')).toHaveText('Username or password is incorrect.');
});

test('an administrator cannot change their own roles; the list of people shows status in words', async ({
	page
}) => {
	await page.setViewportSize({ width: 1280, height: 800 });
	await signIn(page, 'admin');
	await page.goto('/people');
	await expect(page.getByRole('table', { name: 'Accounts' })).toContainText('tech1');
	await shot(page, 'people-list');
	await page.getByRole('link', { name: 'admin', exact: true }).click();
	await expect(page.getByText('Nobody changes their own roles')).toBeVisible();
	await expect(page.getByRole('button', { name: 'Change roles' })).toHaveCount(0);
	await shot(page, 'people-detail-self');
});
