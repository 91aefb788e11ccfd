import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { json } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { handle as authHandle } from '$lib/server/auth/index';
import { guard } from '$lib/server/auth/guard';
import { closeDatabase } from '$lib/server/db/index';
import { log } from '$lib/server/log';
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
const isJson = (response: Response) =>
	response.status < 400 ||
	(response.headers.get('content-type') ?? '').includes('application/json');

function apiMessage(status: number, method: string) {
	if (status === 404) return 'Not found';
	if (status === 405) return `${method} is not allowed on this route`;
	if (status >= 500) return 'Something went wrong on our side';
	return 'The request was refused';
}

/** Request id, security headers, and JSON (never HTML) from every API route. */
const core: Handle = async ({ event, resolve }) => {
	event.locals.requestId = crypto.randomUUID();
	event.locals.user = null;
	// BODY_SIZE_LIMIT is raised for photo uploads; every other route keeps to 1 MB.
	const declared = Number(event.request.headers.get('content-length') ?? 0);
	if (declared > MAX_BODY && event.route.id !== '/(app)/work/[id=uuid]/evidence')
		return json(
			{ message: 'The request is too large.' },
			{ status: 413, headers: { 'x-request-id': event.locals.requestId } }
		);
	const response = await resolve(event);

	// API routes answer JSON, never an HTML page or bare text, whatever the client asked for.
	if (isApi(event.url.pathname) && !isJson(response)) {
		const status = response.status >= 400 ? response.status : 500;
		const headers = new Headers({ 'x-request-id': event.locals.requestId });
		const allow = response.headers.get('allow');
		if (allow) headers.set('allow', allow);
		return json(
			{ message: apiMessage(status, event.request.method), errorId: event.locals.errorId },
			{ status, headers }
		);
	}

	// Some responses (Response.redirect from Auth.js) have immutable headers: copy those first.
	const out = isImmutable(response) ? new Response(response.body, response) : response;
	for (const [name, value] of Object.entries(securityHeaders)) out.headers.set(name, value);
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
	'x-frame-options': 'DENY'
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
