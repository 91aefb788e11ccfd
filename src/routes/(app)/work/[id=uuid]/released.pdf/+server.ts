import { error } from '@sveltejs/kit';
import { and, eq, exists } from 'drizzle-orm';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { workOrders, workOrderTransitions } from '$lib/server/db/schema';
import { releasedPdf } from '$lib/server/pdf/index';
import type { RequestHandler } from './$types';

/** The work order's number, and whether it has been released (a release is final). */
async function numberOf(id: string) {
	const [row] = await db()
		.select({
			number: workOrders.number,
			released: exists(
				db()
					.select({ one: workOrderTransitions.id })
					.from(workOrderTransitions)
					.where(
						and(
							eq(workOrderTransitions.workOrderId, workOrders.id),
							eq(workOrderTransitions.kind, 'released')
						)
					)
			).mapWith(Boolean)
		})
		.from(workOrders)
		.where(eq(workOrders.id, id));
	return row ?? null;
}

/**
 * The released maintenance record as stored at release (7/10): the original bytes from S3, served
 * only when they still match the SHA-256 audited for them.
 */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'technician', 'planner', 'quality', 'inspector');
	const wo = await numberOf(event.params.id);
	if (!wo) error(404, 'No such work order.');
	const found = await releasedPdf(event.params.id).catch(() => undefined);
	if (found === undefined) error(503, 'The record store does not answer: try again in a minute.');
	if (!found)
		error(
			404,
			wo.released
				? 'The released record is being stored: try again in a minute.'
				: 'This work order is not released: there is no released record yet.'
		);
	if (!found.intact)
		error(409, 'The stored record no longer matches its hash: tell Quality (it is kept as found).');
	return new Response(found.bytes as BodyInit, {
		headers: {
			'content-type': 'application/pdf',
			'content-disposition': `inline; filename="${wo.number}-released.pdf"`,
			'x-content-sha256': found.row.sha256,
			'cache-control': 'private, no-store'
		}
	});
};
