import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { handle as authHandle } from '$lib/server/auth/index';
import { apiError, normaliseApiError } from '$lib/server/api-errors';
import { guard } from '$lib/server/auth/guard';
import { closeDatabase } from '$lib/server/db/index';
import { log } from '$lib/server/log';
import { hit, tooManyWords } from '$lib/server/rate-limit';
import { startCheckpointWorker, stopCheckpointWorker } from '$lib/server/audit/checkpoints';
import { startOutboxWorker, stopOutboxWorker } from '$lib/server/outbox';
import { startPmScheduler, stopPmScheduler } from '$lib/server/pm';
import '$lib/server/pdf/index'; // registers the released-record job of the outbox
import { env } from '$env/dynamic/private';

export const init: ServerInit = async () => {
	// adapter-node emits this on SIGTERM/SIGINT once the HTTP server has closed: the open pool
	// would otherwise keep the process alive.
	process.once('sveltekit:shutdown', async (reason: string) => {
		stopCheckpointWorker();
		stopPmScheduler();
		await stopOutboxWorker();
		await closeDatabase();
		log.info('server stopped', { reason });
	});
	// The outbox worker (7/10): e-mails and released records after their transactions commit.
	if (env.OUTBOX_WORKER !== 'off') {
		startOutboxWorker(Number(env.OUTBOX_INTERVAL_MS ?? 5000));
		// Audit checkpoints every 1,000 events (8/10), looked for once a minute.
		startCheckpointWorker(Number(env.CHECKPOINT_INTERVAL_MS ?? 60_000));
	}
	// The PM scheduler (9/10): work orders that fall within their lead time, every 15 minutes.
	if (env.PM_SCHEDULER !== 'off') startPmScheduler(Number(env.PM_SCHEDULER_INTERVAL_MS ?? 900_000));
};

const MAX_BODY = 1024 * 1024;
const isApi = (path: string) => path === '/api' || path.startsWith('/api/');

/** Request id, security headers, and JSON (never HTML) from every API route, errors in one shape. */
const core: Handle = async ({ event, resolve }) => {
	event.locals.requestId = crypto.randomUUID();
	event.locals.user = null;
	// BODY_SIZE_LIMIT is raised for photo uploads; every other route keeps to 1 MB.
	const declared = Number(event.request.headers.get('content-length') ?? 0);
	if (declared > MAX_BODY && event.route.id !== '/(app)/work/[id=uuid]/evidence')
		return apiError(413, 'The request is too large: send at most 1 MB.', null, {
			headers: { 'x-request-id': event.locals.requestId }
		});
	// Requests to the API per client address (rate-limit.ts), before anything else is done for them;
	// not the health checks, which load balancers poll.
	if (isApi(event.url.pathname) && !event.url.pathname.startsWith('/api/v1/health')) {
		const rate = hit('api_address', event.getClientAddress());
		if (!rate.ok) {
			if (rate.first) log.warn('rate limit reached', { kind: 'api_address', limit: rate.limit });
			return apiError(429, tooManyWords('API requests from your address', rate.retryAfter), null, {
				headers: { 'retry-after': String(rate.retryAfter), 'x-request-id': event.locals.requestId }
			});
		}
	}
	const resolved = await resolve(event);

	// API routes answer JSON, never an HTML page or bare text, whatever the client asked for, and
	// every error in one shape, {message, field} (api-errors.ts; the Error schema of openapi.json).
	const response = isApi(event.url.pathname)
		? await normaliseApiError(resolved, {
				method: event.request.method,
				path: event.url.pathname,
				errorId: event.locals.errorId
			})
		: resolved;

	// Some responses (Response.redirect from Auth.js) have immutable headers: copy those first.
	const out = isImmutable(response) ? new Response(response.body, response) : response;
	for (const [name, value] of Object.entries(securityHeaders)) out.headers.set(name, value);
	// Served over HTTPS (ORIGIN https://…, or a proxy that says so to adapter-node): browsers keep
	// to HTTPS for a year (RFC 6797). Never over plain HTTP, where it would mean nothing.
	if (event.url.protocol === 'https:')
		out.headers.set('strict-transport-security', 'max-age=31536000; includeSubDomains');
	out.headers.set('x-request-id', event.locals.requestId);
	// A signed-in page must not come back from the browser's cache after sign-out (shared tablets).
	if (event.locals.user && (out.headers.get('content-type') ?? '').startsWith('text/html')) {
		out.headers.set('cache-control', 'no-store');
	}
	return out;
};

const securityHeaders = {
	'x-content-type-options': 'nosniff',
	'referrer-policy': 'same-origin',
	// Older browsers' word for the CSP's frame-ancestors 'none' (svelte.config.js).
	'x-frame-options': 'DENY',
	'cross-origin-opener-policy': 'same-origin',
	'permissions-policy': 'camera=(self), microphone=(), geolocation=(), payment=()'
};

function isImmutable(response: Response) {
	try {
		response.headers.set('x-request-id', '');
		return false;
	} catch {
		return true;
	}
}

/** Core first (it wraps everything), then Auth.js (/auth/*), then the guard for every other route. */
export const handle = sequence(core, authHandle, guard);

/**
 * Unexpected errors: logged with an id and the stack on the server; the person sees the id only.
 */
export const handleError: HandleServerError = ({ error, event, status, message }) => {
	const errorId = crypto.randomUUID().slice(0, 8);
	event.locals.errorId = errorId;
	if (status === 404) return { message: 'Not found', errorId };
	log.error('unexpected error', {
		errorId,
		requestId: event.locals.requestId,
		method: event.request.method,
		path: event.url.pathname,
		status,
		error:
			error instanceof Error
				? { name: error.name, message: error.message, stack: error.stack }
				: String(error)
	});
	return { message: status < 500 ? message : 'Something went wrong on our side', errorId };
};
