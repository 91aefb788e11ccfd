import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { releasedPdf } from '$lib/server/pdf/index';
import { getWorkOrder } from '$lib/server/work-orders';
import type { RequestHandler } from './$types';

/**
 * The released maintenance record as stored at release (7/10): the original bytes from S3, served
 * only when they still match the SHA-256 audited for them.
 */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'technician', 'planner', 'quality', 'inspector');
	const found = await releasedPdf(event.params.id).catch(() => undefined);
	if (found === undefined) error(503, 'The record store does not answer: try again in a minute.');
	if (!found) {
		const wo = await getWorkOrder(event.params.id);
		error(
			404,
			!wo
				? 'No such work order.'
				: wo.status === 'released'
					? 'The released record is being stored: try again in a minute.'
					: 'This work order is not released: there is no released record yet.'
		);
	}
	if (!found.intact)
		error(409, 'The stored record no longer matches its hash: tell Quality (it is kept as found).');
	const wo = (await getWorkOrder(event.params.id))!;
	return new Response(found.bytes as BodyInit, {
		headers: {
			'content-type': 'application/pdf',
			'content-disposition': `inline; filename="${wo.wo.number}-released.pdf"`,
			'x-content-sha256': found.row.sha256,
			'cache-control': 'private, no-store'
		}
	});
};
