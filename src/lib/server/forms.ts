import { fail, type RequestEvent } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { z, ZodNumber, ZodObject, ZodType } from 'zod';
import type { Role } from '$lib/roles';
import { requireRole, type User } from './auth/guard';
import { personOf, RecordError, type Recorder } from './records';
import { SignatureError } from './signatures/index';

/**
 * The answer to a form that did not validate: 422 when the reason for a change is missing or
 * blank (REQUIREMENTS AT2), 400 for anything else. Nothing is stored either way.
 */
export function refused<F extends { errors: object }>(form: F) {
	const errors = form.errors as { reason?: unknown };
	return fail(errors.reason ? 422 : 400, { form });
}

/**
 * The form action that saves a new version of versioned master data (instruments, parts): a
 * Planner, the validated form, the module's change with the version the person saw and the
 * reason; a refusal beside the reason; on success the form moves on to the new version.
 */
export async function newVersionAction<
	S extends ZodObject<{ fromVersion: ZodNumber; reason: ZodType<string> }>
>(
	event: RequestEvent,
	schema: S,
	change: (
		by: Recorder,
		fromVersion: number,
		details: Omit<z.infer<S>, 'fromVersion' | 'reason'>,
		reason: string
	) => Promise<unknown>
) {
	const user = await requireRole(event, 'planner');
	const form = await superValidate(event.request, zod4(schema), { id: 'change' });
	if (!form.valid) return refused(form);
	const { fromVersion, reason, ...details } = form.data as z.infer<S>;
	try {
		await change(personOf(user), fromVersion, details, reason);
	} catch (e) {
		if (e instanceof RecordError)
			return setError(form, 'reason' as never, e.message, { status: e.status });
		throw e;
	}
	Object.assign(form.data, { reason: '', fromVersion: fromVersion + 1 });
	return message(form, { kind: 'ok', text: `Saved as version ${fromVersion + 1}.` });
}

/**
 * A form action that signs (or otherwise changes) a GMP record: the role, the validated form,
 * the module's change; a wrong password beside the password field, any other refusal as the
 * form's message with its status (409 makes the signing dialog reload the page); the password
 * never goes back to the browser.
 */
export async function recordAction<S extends ZodObject>(
	event: RequestEvent,
	options: { schema: S; id: string; role: Role; ok: string },
	change: (user: User, data: z.infer<S>) => Promise<unknown>
) {
	const user = await requireRole(event, options.role);
	const form = await superValidate(event.request, zod4(options.schema), { id: options.id });
	const clear = () => {
		const data = form.data as Record<string, unknown>;
		if ('password' in data) data.password = '';
	};
	if (!form.valid) {
		clear();
		return refused(form);
	}
	try {
		await change(user, form.data as z.infer<S>);
	} catch (e) {
		clear();
		if (e instanceof SignatureError) {
			if (e.retryAfter) event.setHeaders({ 'retry-after': String(e.retryAfter) });
			return setError(form, 'password' as never, e.message, {
				status: e.status === 423 ? 403 : e.status
			});
		}
		if (e instanceof RecordError) {
			if (e.field && e.field in (form.data as Record<string, unknown>))
				return setError(form, e.field as never, e.message, { status: e.status });
			return message(form, { kind: 'error', text: e.message }, { status: e.status });
		}
		throw e;
	}
	clear();
	return message(form, { kind: 'ok', text: options.ok });
}
