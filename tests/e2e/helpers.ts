import { expect, type Browser, type Page } from '@playwright/test';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { simpleParser } from 'mailparser';
import postgres from 'postgres';

/** The demo password (README, "Demo accounts"); demo data only. */
export const DEMO_PASSWORD = 'lantern-harbour-orbit';

export const shot = (page: Page, name: string) =>
	page.screenshot({ path: `test-results/screens/${name}.png`, fullPage: true });

export async function expectNoHorizontalScroll(page: Page) {
	const overflow = await page.evaluate(
		() => document.documentElement.scrollWidth - window.innerWidth
	);
	expect(overflow).toBeLessThanOrEqual(0);
}

/** Signs in through the sign-in page, as a person would. */
export async function signIn(page: Page, username: string, password = DEMO_PASSWORD) {
	await page.goto('/login');
	await page.getByLabel('Username').fill(username);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
	// Done when the page has moved on, or says why not.
	await Promise.race([
		page.waitForURL((url) => url.pathname !== '/login'),
		page.getByRole('alert').waitFor()
	]);
}

export async function signedInPage(browser: Browser, username: string, password = DEMO_PASSWORD) {
	const context = await browser.newContext();
	const page = await context.newPage();
	await signIn(page, username, password);
	await expect(page).not.toHaveURL(/\/login/);
	return page;
}

/** The owner role's connection to the browser tests' database, for setting up what a test needs. */
export function ownerSql() {
	const url = process.env.E2E_OWNER_DATABASE_URL;
	if (!url)
		throw new Error('E2E_OWNER_DATABASE_URL is not set: run the browser tests with npm test');
	return postgres(url, { max: 1, onnotice: () => {} });
}

export const uniqueUsername = (prefix: string) =>
	`${prefix}-${Math.random().toString(36).slice(2, 8)}`;

/** An administrator creates an account through People and access; returns its one-time password. */
export async function createAccountAsAdmin(
	admin: Page,
	account: { username: string; fullName: string; roles: string[] }
) {
	await admin.goto('/people/new');
	await admin.getByLabel('Username').fill(account.username);
	await admin.getByLabel('Full name').fill(account.fullName);
	await admin.getByLabel('E-mail').fill(`${account.username}@ostmere.example`);
	for (const role of account.roles)
		await admin.getByRole('checkbox', { name: new RegExp(`^${role}`) }).check();
	await admin.getByRole('button', { name: 'Create the account' }).click();
	const password = (await admin.getByTestId('one-time-password').textContent())!.trim();
	expect(password).toMatch(/^[a-z2-9]{5}(-[a-z2-9]{5}){3}$/);
	return password;
}

/** A new account that has already chosen its own password: returns that password. */
export async function readyAccount(
	browser: Browser,
	admin: Page,
	account: { username: string; fullName: string; roles: string[] }
) {
	const oneTime = await createAccountAsAdmin(admin, account);
	const page = await (await browser.newContext()).newPage();
	await signIn(page, account.username, oneTime);
	await expect(page).toHaveURL(/\/account\?required=1/);
	const password = 'slow river under amber lamps';
	await page.getByLabel('Current password').fill(oneTime);
	await page.getByLabel('New password', { exact: true }).fill(password);
	await page.getByLabel('New password again').fill(password);
	await page.getByRole('button', { name: 'Change password' }).click();
	await expect(page).toHaveURL(/\/login\?changed=1/);
	await page.context().close();
	return password;
}

/** The messages the SMTP fake of this run kept (one .eml each), parsed, with the envelope recipient. */
export async function mailsAt(folder = process.env.COUNTERSIGN_MAIL_FOLDER ?? '') {
	if (!folder)
		throw new Error(
			'COUNTERSIGN_MAIL_FOLDER is not set: scripts/test.js passes the SMTP fake’s folder'
		);
	const files = existsSync(folder) ? readdirSync(folder).filter((f) => f.endsWith('.eml')) : [];
	return Promise.all(
		files.map(async (f) => {
			const raw = readFileSync(join(folder, f));
			const parsed = await simpleParser(raw);
			return {
				rcpt: /^X-Fake-Rcpt-To: (.*)$/m.exec(raw.toString('utf8'))![1]!.trim(),
				subject: parsed.subject ?? '',
				text: parsed.text ?? '',
				html: String(parsed.html)
			};
		})
	);
}
