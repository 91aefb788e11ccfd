import { expect, test } from '@playwright/test';
import postgres from 'postgres';
import { mailsAt, shot, signIn } from './helpers';

// Tampering found in the browser (issue 8/10 item 3 and "Done when"; REQUIREMENTS AT3): a
// superuser changes one event past the append-only trigger, as an intruder with database access
// could; the inspector's verification in the browser names that event as the first bad one, the
// failure is audited, and Quality and the Administrators are told by e-mail. Runs after every
// other browser test (playwright.config.ts, project "tamper"), and puts the event back after.
test('after a superuser changes one event, the browser verification shows it as the first bad one', async ({
	page
}) => {
	test.setTimeout(90_000);
	await page.setViewportSize({ width: 1280, height: 900 });
	await signIn(page, 'inspector');
	await page.goto('/audit');
	// First the chain as it is: intact, the progress at its end.
	await page.getByRole('button', { name: 'Check the chain' }).click();
	await expect(page.getByText(/Intact: all \d+ events verify\./)).toBeVisible();
	const progress = page.getByRole('progressbar', { name: /Checked [\d,]+ of [\d,]+ events/ });
	await expect(progress).toBeVisible();
	const checked = await progress.getAttribute('value');
	const total = await progress.getAttribute('max');
	expect(Number(checked)).toBeGreaterThan(0);
	expect(checked).toBe(total);

	const url = process.env.E2E_SUPERUSER_DATABASE_URL;
	if (!url)
		throw new Error('E2E_SUPERUSER_DATABASE_URL is not set: run the browser tests with npm test');
	const superuser = postgres(url, { max: 1, onnotice: () => {} });
	const [victim] = await superuser`select seq, reason from audit_event
		where action = 'work_order.entry_correct' order by seq limit 1`;
	const seq = Number(victim!.seq);
	await superuser.begin(async (sql) => {
		await sql`set local session_replication_role = replica`;
		await sql`update audit_event set reason = 'Nothing to see here' where seq = ${seq}`;
	});
	try {
		await page.getByRole('button', { name: 'Check the chain' }).click();
		const alert = page.getByRole('alert');
		await expect(alert).toContainText(`Broken at event ${seq}`);
		await expect(alert).toContainText('hash mismatch');
		await shot(page, 'audit-tampered');
		await alert.getByRole('link', { name: `Open event ${seq}` }).click();
		const first = page
			.getByRole('list', { name: 'Events, newest first' })
			.getByRole('listitem')
			.first();
		await expect(first).toContainText(`#${seq}`);
		await expect(first).toContainText('Nothing to see here');
		// Audited, and e-mailed to Quality and the Administrators.
		const [failed] = await superuser`select new_values from audit_event
			where action = 'audit.verify_failed' order by seq desc limit 1`;
		expect(failed!.new_values).toMatchObject({ firstBadSeq: seq });
		const subject = `The audit trail failed its verification at event ${seq}`;
		await expect
			.poll(
				async () =>
					(await mailsAt())
						.filter((m) => m.subject === subject)
						.map((m) => m.rcpt)
						.sort(),
				{
					timeout: 20_000
				}
			)
			.toEqual(expect.arrayContaining(['admin@ostmere.example', 'quality@ostmere.example']));
	} finally {
		await superuser.begin(async (sql) => {
			await sql`set local session_replication_role = replica`;
			await sql`update audit_event set reason = ${victim!.reason} where seq = ${seq}`;
		});
		await superuser.end();
	}
});
