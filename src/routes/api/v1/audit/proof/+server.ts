import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { apiError, fieldOfIssue } from '$lib/server/api-errors';
import { consistencyOf, inclusionOf } from '$lib/server/audit/checkpoints';
import { requireRole } from '$lib/server/auth/guard';
import type { RequestHandler } from './$types';

const size = (what: string) =>
	z.coerce
		.number({ error: `${what} must be a whole number.` })
		.int(`${what} must be a whole number.`)
		.positive(`${what} must be 1 or more.`)
		.max(Number.MAX_SAFE_INTEGER, `${what} is too large.`);
const inclusion = z.strictObject({ seq: size('seq'), treeSize: size('treeSize') });
const consistency = z.strictObject({ first: size('first'), second: size('second') });
const USAGE =
	'Ask for ?seq=N&treeSize=M (an inclusion proof) or ?first=A&second=B (a consistency proof), whole numbers from 1.';

/**
 * A Merkle proof as JSON that `node scripts/verify-export.mjs --inclusion|--consistency FILE`
 * checks: `?seq=N&treeSize=M` (event N is in the checkpoint of M events) or
 * `?first=A&second=B` (the checkpoint of B events extends the one of A).
 */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'quality', 'inspector');
	const params = Object.fromEntries(event.url.searchParams);
	const schema =
		'seq' in params || 'treeSize' in params
			? inclusion
			: 'first' in params || 'second' in params
				? consistency
				: null;
	const parsed = schema?.safeParse(params);
	if (!parsed?.success) {
		const issue = parsed?.error.issues[0];
		const key = issue?.path[0] === undefined ? undefined : String(issue.path[0]);
		const message =
			!issue || issue.code === 'unrecognized_keys'
				? USAGE
				: key && !(key in params)
					? `${key} is missing. ${USAGE}`
					: issue.message;
		return apiError(400, message, fieldOfIssue(issue));
	}
	const q = parsed.data;
	const proof =
		'seq' in q ? await inclusionOf(q.seq, q.treeSize) : await consistencyOf(q.first, q.second);
	if (!proof)
		return 'seq' in q
			? apiError(
					404,
					`There is no checkpoint of ${q.treeSize} events holding event ${q.seq}: see GET /api/v1/audit/checkpoints.`,
					'treeSize'
				)
			: apiError(
					404,
					`There is no pair of checkpoints of ${q.first} and ${q.second} events (the first no larger than the second): see GET /api/v1/audit/checkpoints.`,
					'first'
				);
	return json(proof, { headers: { 'cache-control': 'no-store' } });
};
