import { json } from '@sveltejs/kit';
import { checkHealth } from '$lib/server/health';
import type { RequestHandler } from './$types';

/** Liveness and readiness for load balancers and operators: 200 when every part answers. */
export const GET: RequestHandler = async () => {
	const health = await checkHealth();
	return json(health, {
		status: health.status === 'ok' ? 200 : 503,
		headers: { 'cache-control': 'no-store' }
	});
};
