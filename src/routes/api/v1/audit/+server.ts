import { json } from '@sveltejs/kit';
import { auditParams, auditQuerySchema, browseAudit } from '$lib/server/audit/browse';
import { requireRole } from '$lib/server/auth/guard';
import type { RequestHandler } from './$types';

/**
 * One page of the audit trail, filtered (8/10): ?from&to (dates or date-times), person (account
 * id), action (exact, or a prefix ending in "."), entityType, equipment (tag), workOrder (number
 * or id), q (free text in reasons and values), order (desc|asc), limit (≤ 200), after (the seq
 * cursor of the page before). Answers {"events":[…],"next":seq|null}.
 */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'quality', 'inspector');
	const parsed = auditQuerySchema.safeParse(auditParams(event.url.searchParams));
	if (!parsed.success) {
		const issue = parsed.error.issues[0]!;
		const field = issue.path.map(String).join('.');
		return json(
			{
				message:
					issue.code === 'unrecognized_keys'
						? `Unknown filter ${issue.keys.join(', ')}: use from, to, person, action, entityType, equipment, workOrder, q, order, limit, after.`
						: issue.message,
				field: field || null
			},
			{ status: 400 }
		);
	}
	return json(await browseAudit(parsed.data), { headers: { 'cache-control': 'no-store' } });
};
