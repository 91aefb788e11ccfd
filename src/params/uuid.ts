import type { ParamMatcher } from '@sveltejs/kit';

/**
 * A UUID in its canonical text form (lowercase, as PostgreSQL writes it); anything else is a 404
 * before any query runs, so one record never has two addresses.
 */
export const match: ParamMatcher = (param) =>
	/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/.test(param);
