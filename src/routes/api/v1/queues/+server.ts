import { json } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { queuesOf } from '$lib/server/queues';
import type { RequestHandler } from './$types';

/** What waits for the signed-in person: [{key, title, empty, items: [{id, title, detail, at?, href?}]}]. */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event);
	return json({ queues: await queuesOf(user) }, { headers: { 'cache-control': 'no-store' } });
};
