import { json } from '@sveltejs/kit';
import {
	auditFilterNames,
	auditParams,
	auditQuerySchema,
	browseAudit,
	queryRefusal
} from '$lib/server/audit/browse';
import { apiError, fieldOfIssue } from '$lib/server/api-errors';
import { requireRole } from '$lib/server/auth/guard';
import type { RequestHandler } from './$types';

/**
 * One page of the audit trail, filtered (8/10): ?from&to (dates or date-times), person (account
 * id), action (exact, or a prefix ending in "."), entityType, equipment (tag), workOrder (number
 * or id), q (free text in reasons and values), record (one record's History:
 * <kind>:<id>, as recordScope in audit/browse.ts says), order (desc|asc), limit (≤ 200), after (the seq
 * cursor of the page before). Answers {"events":[…],"next":seq|null}.
 */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'quality', 'inspector');
	const parsed = auditQuerySchema.safeParse(auditParams(event.url.searchParams));
	if (!parsed.success) {
		const refusal = queryRefusal(parsed.error, [...auditFilterNames, 'order', 'limit', 'after']);
		return apiError(400, refusal.message, fieldOfIssue(parsed.error.issues[0]));
	}
	return json(await browseAudit(parsed.data), { headers: { 'cache-control': 'no-store' } });
};
