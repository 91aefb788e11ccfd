import { desc } from 'drizzle-orm';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db/index';
import { auditEvent } from '$lib/server/db/schema/index';
import type { PageServerLoad } from './$types';

/** The newest events; the full browser with filters and paging comes with 8/10. */
export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'quality', 'inspector');
	const rows = await db()
		.select({
			seq: auditEvent.seq,
			at: auditEvent.at,
			actorKind: auditEvent.actorKind,
			actorName: auditEvent.actorName,
			actorRoles: auditEvent.actorRoles,
			action: auditEvent.action,
			entityType: auditEvent.entityType,
			entityId: auditEvent.entityId,
			reason: auditEvent.reason
		})
		.from(auditEvent)
		.orderBy(desc(auditEvent.seq))
		.limit(50);
	return { events: rows.map((r) => ({ ...r, at: r.at.toISOString() })) };
};
