import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD, expectNoHorizontalScroll, ownerSql, shot, signedInPage } from './helpers';

// Plant master data in the browser (issue 4/10 "Done when"): a Planner registers a valve and
// writes a draft procedure with three typed steps; Quality approves it with a signature; the
// comparison shows the change of a second draft. Screenshots go to test-results/screens/.

const suffix = () => String(Math.floor(1000 + Math.random() * 9000));

async function fillField(
	page: Page,
	step: number,
	field: number,
	values: { label: string; kind: string }
) {
	const scope = page.getByRole('group', { name: new RegExp(`^Step ${step}, field ${field}`) });
	await scope.getByLabel('Label').fill(values.label);
	await scope.getByLabel('Kind').selectOption({ label: values.kind });
	return scope;
}

test.describe.configure({ mode: 'serial' });

test('a Planner registers a diaphragm valve, then changes it with a reason; both versions stay', async ({
	browser
}) => {
	const page = await signedInPage(browser, 'planner');
	await page.setViewportSize({ width: 1280, height: 900 });
	const tag = `XV-9${suffix()}`;
	await page.goto('/plant');
	await expect(page.getByRole('table', { name: 'Equipment' }).getByRole('row')).not.toHaveCount(1);
	await shot(page, 'plant-register');
	await page.getByRole('link', { name: 'Register equipment' }).click();
	await expect(page.getByRole('heading', { level: 1, name: 'Register equipment' })).toBeVisible();

	// Nothing filled: errors beside the fields, nothing stored.
	await page.getByRole('button', { name: 'Register' }).click();
	await expect(page.getByText('Use a tag like XV-3104')).toBeVisible();
	await expect(page.getByText('Enter the nominal size')).toBeVisible();
	await shot(page, 'plant-register-errors');

	await page.getByLabel('Tag').fill(tag.toLowerCase());
	await page
		.getByLabel('Area')
		.selectOption({ label: 'B30 / WFI · Water-for-injection generation' });
	await page.getByLabel('Description').fill('Test loop sample valve');
	await page.getByLabel('Nominal size').fill('DN 25');
	await page.getByLabel('Diaphragm material code').fill('DM-EPDM-70');
	await page.getByLabel('Actuator fail position').selectOption({ label: 'Spring-to-open' });
	await page.getByLabel('Body material').fill('Stainless steel 316L');
	await page.getByLabel('Bonnet fasteners').fill('4');
	await page.getByRole('button', { name: 'Register' }).click();
	await expect(page.getByRole('heading', { level: 1, name: new RegExp(tag) })).toBeVisible();
	await expect(page.getByText('In service').first()).toBeVisible();

	await page.getByRole('link', { name: 'Change master data' }).click();
	await expect(page.getByLabel('Tag')).toHaveAttribute('readonly', '');
	await page.getByLabel('Diaphragm material code').fill('DM-PTFE-2P');
	await page.getByRole('button', { name: 'Save version 2' }).click();
	await expect(page.getByText('Give a reason: it is kept in the audit trail.')).toBeVisible();
	await page.getByLabel('Reason for the change').fill('Manufacturer’s data updated');
	await page.getByRole('button', { name: 'Save version 2' }).click();
	await expect(page.getByText('Master data, version 2')).toBeVisible();
	const versions = page.getByRole('region', { name: 'Versions of the master data' });
	await expect(versions.getByText('Version 2')).toBeVisible();
	await expect(versions.getByText('Reason: Manufacturer’s data updated')).toBeVisible();
	await versions.getByText('Version 1', { exact: true }).click();
	await expect(versions.getByText('DM-EPDM-70')).toBeVisible();
	const log = page.getByRole('region', { name: 'Equipment log' });
	await expect(log.getByText('Master data changed (version 2)')).toBeVisible();
	await expect(log.getByText('Registered (version 1)')).toBeVisible();
	await expectNoHorizontalScroll(page);
	await shot(page, 'equipment-page');

	// The register finds it by search.
	await page.goto(`/plant?q=${tag}`);
	await expect(
		page.getByRole('table', { name: 'Equipment' }).getByRole('link', { name: tag })
	).toBeVisible();
	await expect(page.getByText('1 item match')).toBeVisible();
});

test('a Planner writes a draft with three typed steps; Quality approves it with a signature; a second draft is compared', async ({
	browser
}) => {
	test.setTimeout(120_000); // a whole journey (55 s measured here): draft, three steps, approval, a second draft
	const code = `MP-T${suffix()}`;
	const planner = await signedInPage(browser, 'planner');
	await planner.setViewportSize({ width: 1280, height: 900 });
	await planner.goto('/procedures');
	await shot(planner, 'procedures-list');
	await planner.getByRole('link', { name: 'New procedure' }).click();
	await planner.getByLabel('Procedure code').fill(code);
	await planner.getByLabel('Title').first().fill('Test bonnet check');

	// Step 1: a number with limits
	await planner.getByLabel('Step title').nth(0).fill('Measure the gap');
	await planner.getByLabel('Instruction').nth(0).fill('Measure the bonnet gap at four points.');
	await planner.getByRole('button', { name: 'Add a caution' }).nth(0).click();
	await planner.getByLabel('Hazard').nth(0).selectOption({ label: 'Steam or hot surface' });
	await planner.getByLabel('Caution 1').nth(0).fill('Let the valve cool before touching it.');
	await planner.getByRole('button', { name: 'Add a field to step 1' }).click();
	let f = await fillField(planner, 1, 1, { label: 'Bonnet gap', kind: 'Number' });
	await f.getByLabel('Unit').fill('mm');
	await f.getByLabel('Decimals').fill('2');
	await f.getByLabel('Limits').selectOption({ label: 'Minimum / maximum' });
	await f.getByLabel(/^Minimum/).fill('0.5');
	await f.getByLabel(/^Maximum/).fill('1.2');

	// Step 2: pass / fail, verification required
	await planner.getByRole('button', { name: 'Add a step' }).click();
	// Keyboard users land in the new step (found by trying the app).
	await expect(planner.getByLabel('Step title').nth(1)).toBeFocused();
	await planner.getByLabel('Step title').nth(1).fill('Check for leaks');
	await planner.getByLabel('Instruction').nth(1).fill('Look for leaks at the bonnet.');
	await planner
		.getByLabel(/Verification required/)
		.nth(1)
		.check();
	await planner.getByRole('button', { name: 'Add a field to step 2' }).click();
	await fillField(planner, 2, 1, { label: 'No leak', kind: 'Pass / fail' });

	// Step 3: a reference instrument — saved first without its kind, to see the error beside it
	await planner.getByRole('button', { name: 'Add a step' }).click();
	await planner.getByLabel('Step title').nth(2).fill('Check the flow');
	await planner
		.getByLabel('Instruction')
		.nth(2)
		.fill('Measure the flow with a calibrated flow meter.');
	await planner.getByRole('button', { name: 'Add a field to step 3' }).click();
	f = await fillField(planner, 3, 1, { label: 'Flow meter used', kind: 'Reference instrument' });
	// A calculated Kv (6/10) reads two number fields of its step: saved first without its inputs.
	await planner.getByRole('button', { name: 'Add a field to step 3' }).click();
	let q = await fillField(planner, 3, 2, { label: 'Flow', kind: 'Number' });
	await q.getByLabel('Unit').fill('L/min');
	await planner.getByRole('button', { name: 'Add a field to step 3' }).click();
	q = await fillField(planner, 3, 3, { label: 'Pressure drop', kind: 'Number' });
	await q.getByLabel('Unit').fill('kPa');
	await planner.getByRole('button', { name: 'Add a field to step 3' }).click();
	const kvField = await fillField(planner, 3, 4, { label: 'Flow coefficient', kind: 'Calculated' });
	await kvField.getByLabel('Calculation').selectOption({ label: 'Flow coefficient Kv' });
	await expect(kvField).toContainText('Kv = Q · √((ρ/ρ₀) / Δp)');
	await planner.getByRole('button', { name: 'Save the draft' }).click();
	await expect(planner.getByRole('alert')).toContainText('Nothing was saved');
	await expect(f.getByText('Say which kind of instrument')).toBeVisible();
	await expect(kvField.getByText(/Choose the 2 fields this calculation reads/)).toBeVisible();
	await shot(planner, 'procedure-editor-errors');
	await f.getByLabel('Kind of instrument').fill('Flow meter');
	// Only number fields whose unit converts are offered: L/min for Q, kPa for Δp.
	await expect(kvField.getByLabel(/^Flow \(Q\) from/).locator('option')).toHaveText([
		'Choose a number field of this step…',
		'Flow (L/min)'
	]);
	await kvField.getByLabel(/^Flow \(Q\) from/).selectOption({ label: 'Flow (L/min)' });
	await kvField
		.getByLabel(/^Pressure drop across the valve/)
		.selectOption({ label: 'Pressure drop (kPa)' });
	await kvField.getByLabel('Limits').selectOption({ label: 'Minimum / maximum' });
	await kvField.getByLabel(/^Minimum/).fill('3');
	await shot(planner, 'procedure-editor-calculated');
	await planner.getByRole('button', { name: 'Save the draft' }).click();

	await expect(
		planner.getByRole('heading', { level: 1, name: `${code} · Test bonnet check` })
	).toBeVisible();
	await expect(planner.getByText('Draft', { exact: true })).toBeVisible();
	await expect(planner.getByText('0.50 – 1.20 mm')).toBeVisible();
	await expect(planner.getByText('Caution, steam or hot surface:')).toBeVisible();
	await expect(planner.getByRole('region', { name: 'Approve this draft' })).toHaveCount(0);
	await shot(planner, 'procedure-draft');
	const versionUrl = planner.url();

	// Quality approves: the dialog names the signer, the meaning and what is signed.
	const quality = await signedInPage(browser, 'quality');
	await quality.setViewportSize({ width: 1280, height: 900 });
	await quality.goto(versionUrl);
	await quality.getByRole('button', { name: 'Approve with my signature' }).click();
	const dialog = quality.getByRole('dialog', { name: 'Sign: Approved' });
	await expect(dialog).toBeVisible();
	await expect(dialog).toContainText('Quentin Aldous');
	await expect(dialog).toContainText(`Procedure ${code}, version 1 (revision 1)`);
	await expect(dialog).toContainText(
		'Your electronic signature is the legally binding equivalent of your handwritten signature.'
	);
	await shot(quality, 'sign-dialog');
	await dialog.getByLabel('Your password').fill('not-the-password');
	await dialog.getByRole('button', { name: 'Sign: Approved' }).click();
	await expect(
		dialog.getByText('That is not your password. The signature was not made.')
	).toBeVisible();
	await dialog.getByLabel('Your password').fill(DEMO_PASSWORD);
	await dialog.getByRole('button', { name: 'Sign: Approved' }).click();
	await expect(dialog).toBeHidden();
	await expect(quality.getByText('Approved', { exact: true }).first()).toBeVisible();
	const signatures = quality.getByRole('region', { name: 'Signatures' });
	await expect(signatures).toContainText('Quentin Aldous');
	await expect(signatures).toContainText('Matches the content');
	await shot(quality, 'procedure-approved');

	// A second draft, with a reason; the change shows in the comparison.
	await planner.goto(versionUrl);
	await planner.getByRole('link', { name: `← ${code}, all versions` }).click();
	await planner.getByLabel('Reason for the change').fill('Periodic review of the procedure');
	await planner.getByRole('button', { name: 'Start version 2' }).click();
	await expect(
		planner.getByRole('heading', { level: 1, name: `Edit ${code}, version 2 (draft)` })
	).toBeVisible();
	const gap = planner.getByRole('group', { name: /^Step 1, field 1/ });
	await gap.getByLabel(/^Maximum/).fill('1.0');
	await planner.getByRole('button', { name: 'Save revision 2' }).click();
	await expect(planner.getByText(/revision 2, saved/)).toBeVisible();
	await planner.getByRole('link', { name: `← ${code}, all versions` }).click();
	await planner.getByRole('button', { name: 'Compare' }).click();
	const table = planner.getByRole('table', { name: /difference/ });
	await expect(table.getByRole('row', { name: /Bonnet gap/ })).toContainText('0.50 – 1.20 mm');
	await expect(table.getByRole('row', { name: /Bonnet gap/ })).toContainText('0.50 – 1.00 mm');
	await shot(planner, 'procedure-compare');

	// The database holds the approval and its signature; the approved version 1 is unchanged.
	const sql = ownerSql();
	try {
		const [row] = await sql`select count(*)::int as n from procedure_approvals a
			join procedure_versions v on v.id = a.version_id join procedures p on p.id = v.procedure_id
			where p.code = ${code}`;
		expect(row!.n).toBe(1);
	} finally {
		await sql.end();
	}
});

test('the demo approved procedure reads as a document with the safety notice and cautions', async ({
	browser
}) => {
	const page = await signedInPage(browser, 'tech1');
	await page.setViewportSize({ width: 820, height: 1180 });
	await page.goto('/procedures');
	await page.getByRole('link', { name: 'MP-DV-01' }).click();
	await page.getByRole('link', { name: 'Version 1' }).click();
	await expect(page.getByRole('complementary', { name: 'Safety notice' })).toBeVisible();
	await expect(page.getByText('Caution, stored energy:').first()).toBeVisible();
	await expect(page.getByText('Verification required').first()).toBeVisible();
	await expect(page.getByRole('link', { name: 'Edit the draft' })).toHaveCount(0);
	await expect(page.getByRole('button', { name: 'Approve with my signature' })).toHaveCount(0);
	await expectNoHorizontalScroll(page);
	await shot(page, 'procedure-document-tablet');
});

test('instruments show what is due and what cannot be used; parts and qualifications list', async ({
	browser
}) => {
	const page = await signedInPage(browser, 'planner');
	await page.setViewportSize({ width: 1280, height: 900 });
	await page.goto('/instruments');
	const table = page.getByRole('table', { name: 'Reference instruments' });
	await expect(table.getByRole('row', { name: /PG-01/ })).toContainText('Calibration expired');
	await expect(table.getByRole('row', { name: /TW-01/ })).toContainText('Usable, due soon');
	await expect(table.getByRole('row', { name: /FM-01/ })).toContainText('Usable');
	await shot(page, 'instruments');
	await table.getByRole('link', { name: 'TW-01' }).click();
	await expect(
		page.getByRole('heading', { level: 1, name: 'TW-01 · Torque wrench' })
	).toBeVisible();
	await page.getByLabel('Certificate number').fill('');
	await page.getByRole('button', { name: 'Record the calibration' }).click();
	await expect(page.getByText('Enter the calibration date as a date.')).toBeVisible();
	await shot(page, 'instrument-page');

	await page.goto('/parts?q=PTFE');
	await expect(page.getByRole('table', { name: 'Parts' }).getByRole('row')).toHaveCount(3);
	await page.goto('/parts');
	await page.getByRole('link', { name: 'DIA-025-EP' }).click();
	await expect(page.getByText('Expired')).toBeVisible();
	await shot(page, 'part-page');

	// Record a training, then withdraw it with a reason.
	await page.goto('/qualifications');
	await page.getByLabel('Person').selectOption({ label: 'Tomas Verhoek (tech1)' });
	await page
		.getByLabel('Procedure', { exact: true })
		.selectOption({ label: 'MP-PU-01 · Mechanical seal inspection, sanitary centrifugal pump' });
	await page.getByLabel('Trainer').fill('Demo trainer');
	await page.getByRole('button', { name: 'Record the training' }).click();
	await expect(page.getByText('Training recorded.')).toBeVisible();
	const row = page
		.getByRole('table', { name: 'Qualifications' })
		.getByRole('row', { name: /Tomas Verhoek.*MP-PU-01/ });
	await expect(row).toContainText('Qualified');
	await row.getByText('Withdraw', { exact: true }).click();
	await row.getByLabel(/Reason to withdraw/).fill('Entered on the wrong record');
	await row.getByRole('button', { name: 'Withdraw the training record' }).click();
	await expect(row).toContainText('Withdrawn');
	await shot(page, 'qualification-withdrawn');

	await page.goto('/qualifications?show=lapsed');
	await expect(page.getByRole('table', { name: 'Qualifications' })).toContainText('MP-PU-01');
	await expect(page.getByRole('table', { name: 'Qualifications' })).toContainText('Lapsed');
	await shot(page, 'qualifications');
});

test('a technician sees only their own qualifications and cannot open the editors', async ({
	browser
}) => {
	const page = await signedInPage(browser, 'tech2');
	await page.setViewportSize({ width: 390, height: 844 });
	await page.goto('/qualifications');
	await expect(page.getByText('Your training records')).toBeVisible();
	await expect(page.getByRole('table', { name: 'Qualifications' })).not.toContainText(
		'Tomas Verhoek'
	);
	await expect(page.getByRole('button', { name: 'Record the training' })).toHaveCount(0);
	await expectNoHorizontalScroll(page);
	await shot(page, 'qualifications-phone');
	const response = await page.goto('/procedures/new');
	expect(response?.status()).toBe(403);
});
