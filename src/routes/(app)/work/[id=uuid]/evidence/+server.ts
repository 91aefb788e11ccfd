import { json, redirect } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { attachPhoto, MAX_PHOTO_BYTES } from '$lib/server/evidence';
import { RecordError } from '$lib/server/records';
import { EntryErrors } from '$lib/server/work-orders';
import type { RequestHandler } from './$types';

const key = /^[a-z0-9][a-z0-9-]{0,39}$/;
const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * Uploads one photo (7/10). The body is the photo's bytes (the Execute screen sends them with a
 * progress bar), or a multipart form with a `photo` file (without JavaScript). Where it goes is in
 * the query: `step`, and `field` (a photo field) or `deviation`; `seen` is the step version the
 * person saw. The type is decided by the content; the size is capped while reading.
 */
export const POST: RequestHandler = async (event) => {
	const user = await requireRole(event, 'technician');
	const { url, request } = event;
	const q = url.searchParams;
	const form = (request.headers.get('content-type') ?? '').startsWith('multipart/form-data');
	const back = `/work/${event.params.id}/steps/${q.get('step') ?? ''}`;
	const answer = (status: number, message: string, field = 'photo') =>
		form
			? redirect(303, `${back}?photoError=${encodeURIComponent(message)}`)
			: json({ message, field }, { status });

	// Raw bodies are not covered by SvelteKit's form CSRF check: the origin must be the app's own.
	if (!form && request.headers.get('origin') !== url.origin)
		return answer(403, 'Upload from the app’s own page.');
	const step = q.get('step') ?? '';
	const field = q.get('field') || null;
	const deviation = q.get('deviation') || null;
	const seenText = q.get('seen') ?? '';
	if (!key.test(step) || (field && !key.test(field)) || (deviation && !uuid.test(deviation)))
		return answer(400, 'Reload the page and attach the photo again.');
	if (!/^\d{1,9}$/.test(seenText))
		return answer(400, 'Reload the page and attach the photo again.');
	const declared = Number(request.headers.get('content-length') ?? 0);
	if (declared > MAX_PHOTO_BYTES + 64 * 1024)
		return answer(413, 'The photo is larger than 15 MB: take it at a lower resolution.');

	let bytes: Uint8Array;
	let reason = q.get('reason') ?? '';
	let note = q.get('note') ?? '';
	try {
		if (form) {
			const data = await request.formData();
			const file = data.get('photo');
			if (!(file instanceof File)) return answer(400, 'Choose a photo first.');
			if (file.size > MAX_PHOTO_BYTES)
				return answer(413, 'The photo is larger than 15 MB: take it at a lower resolution.');
			bytes = new Uint8Array(await file.arrayBuffer());
			reason = String(data.get('reason') ?? reason);
			note = String(data.get('note') ?? note);
		} else {
			const read = await readCapped(request, MAX_PHOTO_BYTES);
			if (!read)
				return answer(413, 'The photo is larger than 15 MB: take it at a lower resolution.');
			bytes = read;
		}
	} catch {
		return answer(400, 'The upload was interrupted: attach the photo again.');
	}
	try {
		const saved = await attachPhoto(
			user,
			event.params.id,
			{ stepKey: step, fieldKey: field, deviationId: deviation },
			bytes,
			{ seen: Number(seenText), reason, note },
			event.getClientAddress()
		);
		return form ? redirect(303, `${back}?photo=${saved.evidenceId}`) : json(saved, { status: 201 });
	} catch (e) {
		if (e instanceof EntryErrors) {
			const [f, message] = Object.entries(e.fields)[0] ?? ['photo', e.message];
			return answer(e.status, message, f);
		}
		if (e instanceof RecordError) return answer(e.status, e.message);
		throw e;
	}
};

/** The body, or null once it passes `max` bytes (it is not read further). */
async function readCapped(request: Request, max: number): Promise<Uint8Array | null> {
	if (!request.body) return new Uint8Array();
	const reader = request.body.getReader();
	const chunks: Uint8Array[] = [];
	let total = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		total += value.length;
		if (total > max) {
			await reader.cancel();
			return null;
		}
		chunks.push(value);
	}
	const out = new Uint8Array(total);
	let at = 0;
	for (const c of chunks) {
		out.set(c, at);
		at += c.length;
	}
	return out;
}
