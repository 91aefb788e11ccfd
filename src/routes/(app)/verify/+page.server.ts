import { requireRole } from '$lib/server/auth/guard';
import { readRecordHash, verifyRecordHash } from '$lib/server/record-verification';
import type { PageServerLoad } from './$types';

/**
 * The verification page (7/10): a record hash typed from a print, or the QR code's link, checked
 * against the record as it is now and against the audit trail. The hash lives in the URL, so the
 * QR code opens the answer directly (after sign-in).
 */
export const load: PageServerLoad = async (event) => {
	const user = await requireRole(event);
	const typed = event.url.searchParams.get('record');
	const canOpen = ['technician', 'planner', 'quality', 'inspector'].some((r) =>
		user.roles.includes(r as never)
	);
	if (typed === null) return { typed: '', error: null, result: null, canOpen };
	const read = readRecordHash(typed.slice(0, 400));
	if ('error' in read)
		return { typed: typed.slice(0, 400), error: read.error, result: null, canOpen };
	return { typed: read.hash, error: null, result: await verifyRecordHash(read.hash), canOpen };
};
