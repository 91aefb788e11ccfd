import { recordEventNow } from '$lib/server/audit/now';
import { exportLines } from '$lib/server/audit/export';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db/index';
import type { RequestHandler } from './$types';

/**
 * The whole trail as JSON Lines, one event per line: its hashed fields under their column
 * names, plus prev_hash and hash (hex). `node scripts/verify-export.mjs FILE` checks it without
 * the server. The export is itself an audit event, the last line of the file.
 */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event, 'quality', 'inspector');
	const { seq } = await recordEventNow({
		actor: { kind: 'person', id: user.id, name: user.name, roles: user.roles },
		action: 'audit.export',
		entityType: 'audit_trail',
		newValues: { format: 'jsonl' },
		clientAddress: event.getClientAddress()
	});
	const encoder = new TextEncoder();
	const lines = exportLines(db().client, seq);
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
	return new Response(body, {
		headers: {
			'content-type': 'application/x-ndjson; charset=utf-8',
			'content-disposition': `attachment; filename="countersign-audit-trail-${stamp}.jsonl"`,
			'cache-control': 'no-store'
		}
	});
};
