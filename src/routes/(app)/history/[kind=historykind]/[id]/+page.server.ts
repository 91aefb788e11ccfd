import { recordRef } from '$lib/server/audit/browse';
import { requireRole } from '$lib/server/auth/guard';
import { historyPageData } from '$lib/server/history';
import type { PageServerLoad } from './$types';

/**
 * A record's History (8/10): a work order, a step (`<work order id>:<step key>`), equipment or a
 * procedure version, for everyone who may read records. An account's is under /access-review.
 */
export const load: PageServerLoad = async (event) => {
	const user = await requireRole(event, 'technician', 'planner', 'quality', 'inspector');
	return historyPageData(event.url, recordRef(event.params.kind, event.params.id), user);
};
