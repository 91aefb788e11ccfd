import { json } from '@sveltejs/kit';
import { listCheckpoints } from '$lib/server/audit/checkpoints';
import { requireRole } from '$lib/server/auth/guard';
import type { RequestHandler } from './$types';

/** The trail's checkpoints, newest first: {"checkpoints":[{"treeSize","rootHash","reason","createdAt"}]}. */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'quality', 'inspector');
	return json(
		{ checkpoints: await listCheckpoints() },
		{ headers: { 'cache-control': 'no-store' } }
	);
};
