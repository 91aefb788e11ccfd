import { apiError } from '$lib/server/api-errors';
import type { RequestHandler } from './$types';

/** Any API path that no route serves: a JSON 404 for every method, never an HTML page. */
export const fallback: RequestHandler = ({ url }) =>
	apiError(404, `No API route at ${url.pathname}: GET /api/v1/openapi.json lists the routes.`);
