import { json } from '@sveltejs/kit';
import { recordVerificationFailure } from '$lib/server/audit/failures';
import { verifyChain } from '$lib/server/audit/verify';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db/index';
import type { RequestHandler } from './$types';

/**
 * Recomputes the whole chain: {"ok","events","firstBadSeq","problem"}, with events and
 * firstBadSeq as JSON numbers. A failed verification is itself an audit event, e-mailed to
 * Quality and the Administrators. (…/verify/stream reports progress on the way.)
 */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event, 'quality', 'inspector');
	const result = await verifyChain(db().client);
	if (!result.ok) await recordVerificationFailure(user, result, event.getClientAddress());
	return json(result, { headers: { 'cache-control': 'no-store' } });
};
