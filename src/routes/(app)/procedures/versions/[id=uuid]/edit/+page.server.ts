import { error, fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { procedureFormSchema } from '$lib/schemas/procedure';
import { requireRole } from '$lib/server/auth/guard';
import * as procedures from '$lib/server/procedures';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'planner');
	const found = await procedures.getVersion(event.params.id);
	if (!found) error(404, 'No such procedure version.');
	if (found.version.status !== 'draft')
		error(409, 'This version is approved and can no longer change: start a new version.');
	const form = await superValidate(
		{
			code: found.procedure.code,
			fromRevision: found.version.revision,
			content: found.version.content
		},
		zod4(procedureFormSchema),
		{ errors: false }
	);
	return {
		form,
		id: found.version.id,
		code: found.procedure.code,
		version: found.version.version,
		revision: found.version.revision
	};
};

export const actions: Actions = {
	default: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(procedureFormSchema));
		if (!form.valid) return fail(400, { form });
		try {
			await procedures.saveDraft(
				personOf(user),
				event.params.id,
				form.data.fromRevision,
				form.data.content,
				event.getClientAddress()
			);
		} catch (e) {
			if (e instanceof RecordError && e.field === 'followUpCode')
				return setError(form, 'content.followUpCode', e.message, { status: e.status });
			if (e instanceof RecordError)
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			throw e;
		}
		redirect(303, `/procedures/versions/${event.params.id}`);
	}
};
