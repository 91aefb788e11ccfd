import { json } from '@sveltejs/kit';
import { stringify } from 'csv-stringify/sync';
import {
	accessReview,
	changesCsvColumns,
	csvRows,
	parseApiQuery,
	rolesCsvColumns
} from '$lib/server/access-review';
import { apiError } from '$lib/server/api-errors';
import { recordEventNow } from '$lib/server/audit/now';
import { csvCell } from '$lib/server/audit/browse';
import { requireRole } from '$lib/server/auth/guard';
import type { RequestHandler } from './$types';

/**
 * The access review (8/10 item 6; AC5, AC3) for the periodic recertification: every account with
 * its roles (each since the audit event that granted it), last sign-in and flags, and the role
 * changes of the period. JSON by default (`table` keeps one part only); CSV with `format=csv`
 * and `table=roles|changes`. `from` and `to` are UTC dates (default: the last 90 days). Every
 * export is itself an audit event (access_review.export); a refused query records nothing.
 */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event, 'administrator', 'quality', 'inspector');
	const query = parseApiQuery(event.url.searchParams);
	if (!query.ok) return apiError(400, query.message, query.field);
	const { period, format, table } = query;
	const report = await accessReview(period);
	await recordEventNow({
		actor: { kind: 'person', id: user.id, name: user.name, roles: user.roles },
		action: 'access_review.export',
		entityType: 'access_review',
		newValues: { format, table, from: period.from, to: period.to },
		clientAddress: event.getClientAddress()
	});
	const name = `countersign-access-${table ?? 'review'}-${period.from}-to-${period.to}.${format}`;
	const headers = {
		'content-disposition': `attachment; filename="${name}"`,
		'cache-control': 'no-store'
	};
	if (format === 'csv') {
		const columns = table === 'changes' ? changesCsvColumns : rolesCsvColumns;
		const rows = csvRows(report, table ?? 'roles').map((row) => row.map(csvCell));
		return new Response(stringify([[...columns], ...rows]), {
			headers: { ...headers, 'content-type': 'text/csv; charset=utf-8' }
		});
	}
	const body =
		table === 'roles'
			? { ...report, changes: undefined }
			: table === 'changes'
				? { ...report, accounts: undefined }
				: report;
	return json(body, { headers });
};
