import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { recordPdf } from '$lib/server/pdf/index';
import type { RequestHandler } from './$types';

/**
 * The work order's maintenance record as a PDF, for anyone who may read the record: a working
 * print before release, a copy (marked on every page) once the released original is stored.
 */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event, 'technician', 'planner', 'quality', 'inspector');
	const pdf = await recordPdf(event.params.id, { origin: event.url.origin, printedBy: user });
	if (!pdf) error(404, 'No such work order.');
	return new Response(pdf.bytes as BodyInit, {
		headers: {
			'content-type': 'application/pdf',
			'content-disposition': `inline; filename="${pdf.number}.pdf"`,
			'x-record-hash': pdf.recordHash,
			'x-print-kind': pdf.printKind,
			'cache-control': 'private, no-store'
		}
	});
};
