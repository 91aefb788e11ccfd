import { recordVerificationFailure } from '$lib/server/audit/failures';
import { verifyChain } from '$lib/server/audit/verify';
import { requireRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db/index';
import type { RequestHandler } from './$types';

/**
 * The chain verification with its progress (8/10): JSON Lines, one {"checked","total"} line per
 * batch of events, then the answer of GET /api/v1/audit/verify with "done": true. A failure is
 * audited and e-mailed as there.
 */
export const GET: RequestHandler = async (event) => {
	const user = await requireRole(event, 'quality', 'inspector');
	const clientAddress = event.getClientAddress();
	const encoder = new TextEncoder();
	const body = new ReadableStream<Uint8Array>({
		async start(controller) {
			const line = (value: unknown) =>
				controller.enqueue(encoder.encode(`${JSON.stringify(value)}\n`));
			try {
				const result = await verifyChain(db().client, {
					batchSize: 1000,
					onProgress: (checked, total) => line({ checked, total })
				});
				if (!result.ok) await recordVerificationFailure(user, result, clientAddress);
				line({ done: true, ...result });
			} catch {
				line({ done: true, error: 'The verification could not finish: try again.' });
			}
			controller.close();
		}
	});
	return new Response(body, {
		headers: { 'content-type': 'application/x-ndjson; charset=utf-8', 'cache-control': 'no-store' }
	});
};
