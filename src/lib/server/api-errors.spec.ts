import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { apiError, fieldOfIssue, normaliseApiError } from './api-errors';

// The one error shape of the API (issue 9/10 item 5): {message, field}, plus errorId when the
// server failed. Common practice, no source: the shape is ours (openapi.json's Error schema).
const request = { method: 'POST', path: '/api/v1/audit' };
const bodyOf = async (r: Response) => ({ status: r.status, body: await r.json() });

describe('apiError', () => {
	it('answers JSON {message, field}', async () => {
		const r = apiError(400, 'limit is a whole number from 1 to 200.', 'limit');
		expect(r.headers.get('content-type')).toContain('application/json');
		expect(await bodyOf(r)).toEqual({
			status: 400,
			body: { message: 'limit is a whole number from 1 to 200.', field: 'limit' }
		});
		expect(await apiError(404, 'No such thing: look elsewhere.').json()).toEqual({
			message: 'No such thing: look elsewhere.',
			field: null
		});
	});
});

describe('normaliseApiError', () => {
	it('leaves answers under 400 and status documents without a message alone', async () => {
		const ok = new Response('a,b\n', { headers: { 'content-type': 'text/csv' } });
		expect(await normaliseApiError(ok, request)).toBe(ok);
		const down = Response.json({ status: 'down', db: 'timeout' }, { status: 503 });
		expect(await normaliseApiError(down, request)).toBe(down);
	});

	it('keeps a message and adds field: null (the guard’s refusals)', async () => {
		const r = await normaliseApiError(
			Response.json({ message: 'Sign in first' }, { status: 401 }),
			request
		);
		expect(await bodyOf(r)).toEqual({
			status: 401,
			body: { message: 'Sign in first', field: null }
		});
	});

	it('passes an answer that is already in the shape as it is', async () => {
		const r = apiError(400, 'format is jsonl or csv.', 'format');
		expect(await normaliseApiError(r, request)).toBe(r);
	});

	it('gives a bare 405 page the methods to use, and keeps the Allow header', async () => {
		const r = await normaliseApiError(
			new Response('POST method not allowed', { status: 405, headers: { allow: 'GET, HEAD' } }),
			request
		);
		expect(r.headers.get('allow')).toBe('GET, HEAD');
		expect(await bodyOf(r)).toEqual({
			status: 405,
			body: { message: 'POST is not allowed here: use GET or HEAD.', field: null }
		});
	});

	it('replaces SvelteKit’s own "Not found" with where to look', async () => {
		const r = await normaliseApiError(
			Response.json({ message: 'Not found', errorId: 'ab12cd34' }, { status: 404 }),
			{ method: 'GET', path: '/api/v1/nothing' }
		);
		expect(await bodyOf(r)).toEqual({
			status: 404,
			body: {
				message: 'No API route at /api/v1/nothing: GET /api/v1/openapi.json lists the routes.',
				field: null
			}
		});
	});

	it('a failure of the server says what to do and carries the id, from the body or the request', async () => {
		const fromBody = await normaliseApiError(
			Response.json(
				{ message: 'Something went wrong on our side', errorId: 'ab12cd34' },
				{ status: 500 }
			),
			request
		);
		expect((await fromBody.json()) as unknown).toEqual({
			message: expect.stringContaining('quote error ab12cd34'),
			field: null,
			errorId: 'ab12cd34'
		});
		const page = await normaliseApiError(
			new Response('<!doctype html><h1>500</h1>', {
				status: 500,
				headers: { 'content-type': 'text/html' }
			}),
			{ ...request, errorId: 'ef56ab78' }
		);
		expect(page.headers.get('content-type')).toContain('application/json');
		expect(await page.json()).toMatchObject({ field: null, errorId: 'ef56ab78' });
	});

	it('drops anything else a body carried, and a broken JSON body gets the words of its status', async () => {
		const extra = await normaliseApiError(
			Response.json({ message: 'No.', field: 'x', stack: 'at y' }, { status: 409 }),
			request
		);
		expect(await extra.json()).toEqual({ message: 'No.', field: 'x' });
		const broken = await normaliseApiError(
			new Response('{', { status: 413, headers: { 'content-type': 'application/json' } }),
			request
		);
		expect(await broken.json()).toEqual({
			message: 'The request is too large: send at most 1 MB.',
			field: null
		});
	});
});

describe('fieldOfIssue', () => {
	const issue = (schema: z.ZodType, value: unknown) => schema.safeParse(value).error?.issues[0];
	it('names the path, dotted, or the first unknown key, or null for the whole', () => {
		const s = z.strictObject({ a: z.strictObject({ b: z.number() }) });
		expect(fieldOfIssue(issue(s, { a: { b: 'x' } }))).toBe('a.b');
		expect(fieldOfIssue(issue(s, { a: { b: 1 }, colour: 1 }))).toBe('colour');
		expect(fieldOfIssue(issue(s, 'x'))).toBe(null);
		expect(fieldOfIssue(undefined)).toBe(null);
	});
});
