import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';

/**
 * Liveness only: the app server answers, whatever the services behind it (an orchestrator restarts
 * a server that stops answering here; `/api/v1/health` says whether it is ready). Nothing is read,
 * so it is also the bare route the load benchmark compares the app's pages with (bench/load.js).
 */
export const GET: RequestHandler = () =>
	json({ status: 'ok' }, { headers: { 'cache-control': 'no-store' } });
