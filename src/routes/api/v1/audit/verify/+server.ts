import { json } from '@sveltejs/kit';
import { recordEventNow } from '$lib/server/audit/now';
import { verifyChain } from '$lib/server/audit/verify';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db/index';
import type { RequestHandler } from './$types';

/**
 * Recomputes the whole chain: {"ok","events","firstBadSeq","problem"}, with events and
 * firstBadSeq as JSON numbers. A failed verification is itself an audit event.
 */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event, 'quality', 'inspector');
	const result = await verifyChain(db().client);
	if (!result.ok) {
		await recordEventNow({
			actor: { kind: 'person', id: user.id, name: user.name, roles: user.roles },
			action: 'audit.verify_failed',
			entityType: 'audit_trail',
			newValues: {
				events: result.events,
				firstBadSeq: result.firstBadSeq,
				problem: result.problem
			},
			clientAddress: event.getClientAddress()
		});
	}
	return json(result, { headers: { 'cache-control': 'no-store' } });
};
