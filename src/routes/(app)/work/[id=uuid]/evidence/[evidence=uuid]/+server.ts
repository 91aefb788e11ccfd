import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { photoBytes } from '$lib/server/evidence';
import type { RequestHandler } from './$types';

/**
 * A photo of a work order (`?variant=thumb` for its thumbnail), for anyone who may read the
 * record. The bytes are checked against the hash in the record before they are served.
 */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'technician', 'planner', 'quality', 'inspector');
	const variant = event.url.searchParams.get('variant') === 'thumb' ? 'thumb' : 'original';
	const found = await photoBytes(event.params.id, event.params.evidence, variant);
	if (found.status !== 200) error(found.status, found.message);
	const ext = found.mediaType.split('/')[1];
	return new Response(found.bytes as BodyInit, {
		headers: {
			'content-type': found.mediaType,
			'content-length': String(found.bytes.length),
			'content-disposition': `inline; filename="${found.sha256}.${ext === 'jpeg' ? 'jpg' : ext}"`,
			'x-content-sha256': found.sha256,
			'cache-control': 'private, max-age=3600'
		}
	});
};
