import { json } from '@sveltejs/kit';
import type { z } from 'zod';

/**
 * The one shape of every API error (issue 9/10 item 5): `{ "message": string, "field": string |
 * null }`, plus `errorId` when the server failed (the id the server log has the details under).
 * `message` says what to do; `field` names the parameter or body field at fault (dotted for a
 * nested one, e.g. `sipCycle.holdMinutes`), or null when no one field is. The OpenAPI document
 * describes it as the `Error` schema (openapi.ts).
 */
export type ApiErrorBody = { message: string; field: string | null; errorId?: string };

/** The statuses an API route answers with the error shape. */
export type ApiErrorStatus = 400 | 401 | 403 | 404 | 405 | 409 | 413 | 415 | 422 | 429 | 500 | 503;

/** An error answer: JSON `{ message, field }` with the status (and any extra headers). */
export function apiError(
	status: ApiErrorStatus,
	message: string,
	field: string | null = null,
	init: { headers?: HeadersInit; errorId?: string } = {}
): Response {
	const body: ApiErrorBody = { message, field };
	if (init.errorId) body.errorId = init.errorId;
	return json(body, { status, headers: init.headers });
}

/**
 * The field a zod issue is about: its path (dotted), or for unknown keys the first of them;
 * null when it is about the whole.
 */
export function fieldOfIssue(issue: z.core.$ZodIssue | undefined): string | null {
	if (!issue) return null;
	if (issue.code === 'unrecognized_keys') return issue.keys[0] ?? null;
	return issue.path.map(String).join('.') || null;
}

/** What the server says when it failed: try again, and the id to quote if it goes on. */
export const serverFailureMessage = (errorId?: string) =>
	errorId
		? `Something went wrong on our side: try again, and if it happens again quote error ${errorId} to support.`
		: 'Something went wrong on our side: try again, and if it happens again tell support the time of the request.';

/** The words for an error status whose route gave none (SvelteKit's own 404 and 405, an HTML page). */
export function defaultMessage(
	status: number,
	method: string,
	path: string,
	allow?: string | null
) {
	if (status === 401) return 'Sign in first.';
	if (status === 403) return 'Your roles do not allow this: ask an administrator.';
	if (status === 404) return `No API route at ${path}: GET /api/v1/openapi.json lists the routes.`;
	if (status === 405)
		return allow
			? `${method} is not allowed here: use ${allow.split(/\s*,\s*/).join(' or ')}.`
			: `${method} is not allowed here: GET /api/v1/openapi.json lists each route's methods.`;
	if (status === 413) return 'The request is too large: send at most 1 MB.';
	if (status === 415) return 'Send the body as JSON (content-type: application/json).';
	if (status === 429) return 'Too many requests: wait a moment, then try again.';
	if (status >= 500) return serverFailureMessage();
	return 'The request was refused: GET /api/v1/openapi.json describes what each route takes.';
}

/** SvelteKit's own words, which say nothing a person can act on: replaced by `defaultMessage`. */
const generic = new Set(['Not found', 'Not Found', 'Method Not Allowed', 'Internal Error']);

/** The headers an error answer keeps from the response it replaces. */
const kept = ['allow', 'retry-after', 'cache-control', 'x-request-id', 'www-authenticate'];

/**
 * Any API response of status 400 or more, in the one shape: a JSON body with a `message` keeps
 * it (and its `field`, or null); a bare page or text (SvelteKit's 404 and 405, a 500 page) gets
 * the words of `defaultMessage`; a failure of the server (500 and over) always says what to do and
 * carries the error id. A JSON body without a `message` is not an error answer but a status
 * document (GET /api/v1/health's 503) and passes unchanged, as does anything under 400.
 * For hooks.server.ts, after `resolve(event)` on every /api path.
 */
export async function normaliseApiError(
	response: Response,
	request: { method: string; path: string; errorId?: string }
): Promise<Response> {
	if (response.status < 400) return response;
	const type = response.headers.get('content-type') ?? '';
	let body: Record<string, unknown> | null = null;
	if (type.includes('application/json')) {
		try {
			const parsed: unknown = await response.clone().json();
			if (parsed && typeof parsed === 'object' && !Array.isArray(parsed))
				body = parsed as Record<string, unknown>;
		} catch {
			body = null;
		}
		if (body && typeof body.message !== 'string') return response;
	}
	const errorId = typeof body?.errorId === 'string' ? body.errorId : (request.errorId ?? undefined);
	const allow = response.headers.get('allow');
	const message =
		response.status >= 500
			? serverFailureMessage(errorId)
			: typeof body?.message === 'string' &&
				  body.message.trim() !== '' &&
				  !generic.has(body.message)
				? body.message
				: defaultMessage(response.status, request.method, request.path, allow);
	const field = typeof body?.field === 'string' && body.field !== '' ? body.field : null;
	if (
		body &&
		body.message === message &&
		body.field === field &&
		Object.keys(body).every((k) => k === 'message' || k === 'field' || k === 'errorId')
	)
		return response;
	const headers = new Headers();
	for (const name of kept) {
		const value = response.headers.get(name);
		if (value) headers.set(name, value);
	}
	const status = response.status as ApiErrorStatus;
	return apiError(status, message, field, {
		headers,
		errorId: response.status >= 500 ? errorId : undefined
	});
}
