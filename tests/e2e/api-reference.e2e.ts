import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { expectNoHorizontalScroll, shot, signIn } from './helpers';

// The API reference (issue 9/10 item 5): the OpenAPI document in words, rendered by the app
// itself (no CDN), for any signed-in person; the same document downloads as openapi.json
// (OpenAPI Specification 3.1.0).
test('a signed-in person reads the usage operation and its fields, and downloads openapi.json', async ({
	page
}) => {
	await signIn(page, 'tech1');
	await page.goto('/api-reference');
	await expect(page.getByRole('heading', { name: 'API reference', level: 1 })).toBeVisible();

	// The error shape, once for every operation.
	const errorFields = page.getByRole('list', { name: 'Fields of an error' });
	await expect(errorFields.getByText('message', { exact: true })).toBeVisible();
	await expect(errorFields.getByText('field', { exact: true })).toBeVisible();

	// The contents lead to the operation.
	await page.getByRole('link', { name: /POST \/api\/v1\/equipment\/\{tag\}\/usage/ }).click();
	await expect(page).toHaveURL(/#reportUsage$/);
	const usage = page.locator('section#reportUsage');
	await expect(
		usage.getByRole('heading', { name: 'Report usage of a piece of equipment', level: 2 })
	).toBeVisible();
	await expect(usage).toContainText('/api/v1/equipment/{tag}/usage');
	await expect(usage).toContainText('A plant system with an API token of scope usage.');

	const parameters = usage.getByRole('list', { name: /^Parameters of POST/ });
	await expect(parameters.getByRole('listitem').filter({ hasText: 'tag' })).toContainText(
		'path · required'
	);
	const fields = usage.getByRole('list', { name: 'Fields of the request body' });
	const row = (name: string) =>
		fields.getByRole('listitem').filter({ has: page.getByText(name, { exact: true }) });
	await expect(row('sipCycle.startedAt')).toContainText('required in sipCycle');
	await expect(row('sipCycle.startedAt')).toContainText('date and time with its zone (RFC 3339)');
	await expect(row('sipCycle.count')).toContainText('from 1 to 100');
	await expect(row('sipCycle.count')).toContainText('optional');
	await expect(row('sipCycle.peakTemperatureC')).toContainText('from 0 to 200');
	await expect(row('sipCycle.peakTemperatureC')).toContainText('saturated steam');
	await expect(row('operatingHours.hours')).toContainText('from 0.001 to 10,000');
	const errors = usage.getByRole('list', { name: /^Errors of POST/ });
	for (const status of ['400', '401', '403', '404', '413', '500'])
		await expect(errors.getByText(status, { exact: true })).toBeVisible();
	await shot(page, 'api-reference');

	// The same document, downloaded.
	const [download] = await Promise.all([
		page.waitForEvent('download'),
		page.getByRole('link', { name: 'Download openapi.json' }).click()
	]);
	expect(download.suggestedFilename()).toBe('countersign-openapi.json');
	const doc = JSON.parse(readFileSync((await download.path())!, 'utf8'));
	expect(doc.openapi).toBe('3.1.0');
	const post = doc.paths['/equipment/{tag}/usage'].post;
	expect(post.security).toEqual([{ apiToken: ['usage'] }]);
	expect(post.requestBody.content['application/json'].schema).toEqual({
		$ref: '#/components/schemas/UsageReport'
	});
	expect(Object.keys(doc.components.schemas.UsageReport.properties)).toEqual([
		'sipCycle',
		'operatingHours'
	]);

	// A phone: nothing wider than the screen.
	await page.setViewportSize({ width: 390, height: 844 });
	await page.goto('/api-reference#reportUsage');
	await expectNoHorizontalScroll(page);
	await shot(page, 'api-reference-phone');
});

test('the page asks a visitor who is not signed in to sign in', async ({ page }) => {
	await page.goto('/api-reference');
	await expect(page).toHaveURL(/\/login\?callbackUrl=%2Fapi-reference/);
});
