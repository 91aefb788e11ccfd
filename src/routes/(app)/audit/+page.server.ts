import { asc } from 'drizzle-orm';
import { auditParams, auditQuerySchema } from '$lib/server/audit/browse';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db/index';
import { accounts } from '$lib/server/db/schema/index';
import type { PageServerLoad } from './$types';

/**
 * The audit-trail browser (8/10). The filters live in the URL; the events come from
 * GET /api/v1/audit, fetched by the page. The server gives the people to choose from and says
 * which filter of the URL is wrong, if one is.
 */
export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'quality', 'inspector');
	const people = await db()
		.select({ id: accounts.id, name: accounts.fullName, username: accounts.username })
		.from(accounts)
		.orderBy(asc(accounts.fullName));
	const parsed = auditQuerySchema.safeParse(auditParams(event.url.searchParams));
	const issue = parsed.success ? null : parsed.error.issues[0]!;
	return {
		people,
		filterError: issue
			? {
					field: issue.path.map(String).join('.') || null,
					message:
						issue.code === 'unrecognized_keys'
							? `Unknown filter ${issue.keys.join(', ')} in the address.`
							: issue.message
				}
			: null
	};
};
