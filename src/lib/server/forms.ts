import { fail } from '@sveltejs/kit';

/**
 * The answer to a form that did not validate: 422 when the reason for a change is missing or
 * blank (REQUIREMENTS AT2), 400 for anything else. Nothing is stored either way.
 */
export function refused<F extends { errors: object }>(form: F) {
	const errors = form.errors as { reason?: unknown };
	return fail(errors.reason ? 422 : 400, { form });
}
