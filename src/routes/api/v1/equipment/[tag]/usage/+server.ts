import { error, json } from '@sveltejs/kit';
import * as equipment from '$lib/server/equipment';
import { readPlantUsage, recordPlantUsage, usageReportSchema } from '$lib/server/plant-usage';
import { RecordError } from '$lib/server/records';
import type { RequestHandler } from './$types';

/**
 * The plant's usage report (9/10 item 2): `POST /api/v1/equipment/{tag}/usage` with
 * `Authorization: Bearer <usage token>` (checked by the guard before anything else) and a JSON
 * body {sipCycle?: {startedAt, endedAt, count, peakTemperatureC, absolutePressureBar,
 * holdMinutes}, operatingHours?: {hours, until}}. Answers 200 with what is stored; a cycle sent
 * again (same equipment and start) is answered the same and counted once.
 */
export const POST: RequestHandler = async (event) => {
	const token = event.locals.token;
	if (!token) error(401, 'Send the API token as "Authorization: Bearer <token>".');
	let body: unknown;
	try {
		body = await event.request.json();
	} catch {
		return json({ message: 'The body is not JSON.', field: null }, { status: 400 });
	}
	const parsed = usageReportSchema.safeParse(body);
	if (!parsed.success) {
		const issue = parsed.error.issues[0]!;
		return json(
			{
				message:
					issue.code === 'unrecognized_keys'
						? `Unknown field ${issue.keys.join(', ')}: use sipCycle and operatingHours.`
						: issue.message,
				field: issue.path.map(String).join('.') || null
			},
			{ status: 400 }
		);
	}
	const tag = event.params.tag.toUpperCase();
	const id = await equipment.findByTag(tag);
	if (!id)
		return json({ message: `No equipment has the tag ${tag}.`, field: 'tag' }, { status: 404 });
	try {
		return json(await recordPlantUsage(token, { id, tag }, parsed.data, event.getClientAddress()));
	} catch (e) {
		if (e instanceof RecordError)
			return json({ message: e.message, field: e.field ?? null }, { status: e.status });
		throw e;
	}
};

/**
 * A plant display reads the counters and the latest SIP cycles: `GET /api/v1/equipment/{tag}/usage`
 * with a token of scope usage:read (the guard asks for that scope on GET); `?limit=` 1 to 200
 * cycles, 20 by default.
 */
export const GET: RequestHandler = async (event) => {
	const token = event.locals.token;
	if (!token) error(401, 'Send the API token as "Authorization: Bearer <token>".');
	const raw = event.url.searchParams.get('limit');
	const limit = raw === null ? 20 : Number(raw);
	if (!Number.isInteger(limit) || limit < 1 || limit > 200)
		return json(
			{ message: 'limit is a whole number from 1 to 200.', field: 'limit' },
			{ status: 400 }
		);
	const tag = event.params.tag.toUpperCase();
	const id = await equipment.findByTag(tag);
	if (!id)
		return json({ message: `No equipment has the tag ${tag}.`, field: 'tag' }, { status: 404 });
	return json(await readPlantUsage(token, { id, tag }, limit, event.getClientAddress()), {
		headers: { 'cache-control': 'no-store' }
	});
};
