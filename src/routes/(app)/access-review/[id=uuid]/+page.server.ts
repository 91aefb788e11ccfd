import { recordRef } from '$lib/server/audit/browse';
import { requireRole } from '$lib/server/auth/guard';
import { historyPageData } from '$lib/server/history';
import type { PageServerLoad } from './$types';

/** An account's History (8/10, AC5): for those who grant access and those who review it. */
export const load: PageServerLoad = async (event) => {
	const user = await requireRole(event, 'administrator', 'quality', 'inspector');
	return historyPageData(event.url, recordRef('account', event.params.id), user);
};
