import { requireRole } from '$lib/server/auth/guard';
import { apiReference } from './reference';
import type { PageServerLoad } from './$types';

/** The API reference (9/10 item 5): GET /api/v1/openapi.json in words, for any signed-in person. */
export const load: PageServerLoad = async (event) => {
	await requireRole(event);
	return { reference: apiReference() };
};
