import { json } from '@sveltejs/kit';
import { requireRole } from '$lib/server/auth/guard';
import { openApiDocument } from '$lib/server/openapi';
import type { RequestHandler } from './$types';

/**
 * The OpenAPI 3.1.0 document of /api/v1 (issue 9/10 item 5), built from the registry in
 * $lib/server/openapi. For any signed-in person (its rule in $lib/access): it names every route,
 * who may call it and the limits of each field, which an anonymous client has no use for (the
 * only route open to one is /api/v1/health); an integrator gets it from a person who downloads it
 * from the API reference page.
 */
export const GET: RequestHandler = async (event) => {
	await requireRole(event);
	return json(openApiDocument(), {
		headers: {
			'cache-control': 'no-store',
			'content-disposition': 'inline; filename="countersign-openapi.json"'
		}
	});
};
