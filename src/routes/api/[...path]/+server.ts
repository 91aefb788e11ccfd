import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';

/** Any API path that no route serves: a JSON 404 for every method, never an HTML page. */
export const fallback: RequestHandler = ({ url }) =>
	json({ message: `No API route at ${url.pathname}` }, { status: 404 });
