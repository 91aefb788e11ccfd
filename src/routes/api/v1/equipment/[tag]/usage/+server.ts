import { error, json } from '@sveltejs/kit';
import * as equipment from '$lib/server/equipment';
import { recordPlantUsage, usageReportSchema } from '$lib/server/plant-usage';
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
