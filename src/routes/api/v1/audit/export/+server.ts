import { stringify } from 'csv-stringify/sync';
import { apiError, fieldOfIssue } from '$lib/server/api-errors';
import { recordEventNow } from '$lib/server/audit/now';
import { exportLines } from '$lib/server/audit/export';
import {
	auditFilterNames,
	auditParams,
	auditQuerySchema,
	csvCell,
	csvColumns,
	exportFields,
	filteredEvents,
	queryRefusal,
	type AuditQuery
} from '$lib/server/audit/browse';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db/index';
import type { RequestHandler } from './$types';

/**
 * The trail, or a filtered view of it, or one record's History (?record=<kind>:<id>; 8/10), as JSON Lines (default) or CSV (?format=csv).
 * Without filters the JSON Lines are the whole trail in the form of 3/10: its hashed fields under
 * their column names plus prev_hash and hash (hex), which `node scripts/verify-export.mjs FILE`
 * checks without the server. Filters are those of GET /api/v1/audit (paging aside); a filtered
 * view has gaps in the chain, so only each event's own fields and hashes are there to compare.
 * Every export is itself an audit event (with its format and filters), the last event it holds
 * when the view includes it. The X-Export-Events header says how many events up to that one the
 * trail held, so a client can show progress.
 */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event, 'quality', 'inspector');
	const params = auditParams(event.url.searchParams);
	const format = params.format ?? 'jsonl';
	delete params.format;
	delete params.after;
	delete params.limit;
	delete params.order;
	if (format !== 'jsonl' && format !== 'csv')
		return apiError(400, 'format is jsonl or csv.', 'format');
	const parsed = auditQuerySchema.safeParse(params);
	if (!parsed.success) {
		const refusal = queryRefusal(parsed.error, ['format', ...auditFilterNames]);
		return apiError(400, refusal.message, fieldOfIssue(parsed.error.issues[0]));
	}
	const filters: Partial<AuditQuery> = Object.fromEntries(
		auditFilterNames.filter((k) => k in params).map((k) => [k, parsed.data[k as keyof AuditQuery]])
	);
	const filtered = Object.keys(filters).length > 0;
	const { seq } = await recordEventNow({
		actor: { kind: 'person', id: user.id, name: user.name, roles: user.roles },
		action: 'audit.export',
		entityType: 'audit_trail',
		newValues: filtered ? { format, filters } : { format },
		clientAddress: event.getClientAddress()
	});
	const lines = exportText(format, filtered, parsed.data, seq);
	const encoder = new TextEncoder();
	const body = new ReadableStream<Uint8Array>({
		async pull(controller) {
			const next = await lines.next();
			if (next.done) controller.close();
			else controller.enqueue(encoder.encode(next.value));
		},
		async cancel() {
			await lines.return(undefined);
		}
	});
	const stamp = new Date().toISOString().slice(0, 10);
	const what = parsed.data.record
		? `history-${parsed.data.record.kind}`
		: filtered
			? 'audit-view'
			: 'audit-trail';
	const name = `countersign-${what}-${stamp}.${format}`;
	return new Response(body, {
		headers: {
			'content-type':
				format === 'csv' ? 'text/csv; charset=utf-8' : 'application/x-ndjson; charset=utf-8',
			'content-disposition': `attachment; filename="${name}"`,
			'cache-control': 'no-store',
			'x-export-events': String(seq)
		}
	});
};

async function* exportText(
	format: 'jsonl' | 'csv',
	filtered: boolean,
	q: AuditQuery,
	upTo: number
): AsyncGenerator<string> {
	if (format === 'csv') yield stringify([[...csvColumns]]);
	if (!filtered && format === 'jsonl') {
		yield* exportLines(db().client, upTo);
		return;
	}
	for await (const rows of filteredEvents(q, upTo)) {
		if (format === 'jsonl') yield rows.map((r) => JSON.stringify(exportFields(r)) + '\n').join('');
		else {
			const cells = rows.map((r) => {
				const f = exportFields(r) as Record<string, unknown>;
				return csvColumns.map((c) => csvCell(f[c]));
			});
			yield stringify(cells);
		}
	}
}
