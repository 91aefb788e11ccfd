import { fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { blankStep, procedureFormSchema } from '$lib/schemas/procedure';
import { requireRole } from '$lib/server/auth/guard';
import { currentSite } from '$lib/server/plant';
import * as procedures from '$lib/server/procedures';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'planner');
	const form = await superValidate(
		{
			code: '',
			fromRevision: 0,
			content: {
				title: '',
				appliesTo: 'diaphragm_valve',
				purpose: '',
				followUpCode: null,
				steps: [blankStep('step-1')]
			}
		},
		zod4(procedureFormSchema),
		{ errors: false }
	);
	return { form };
};

export const actions: Actions = {
	default: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(procedureFormSchema));
		if (!form.data.code) setError(form, 'code', 'Enter the procedure code.');
		if (!form.valid || !form.data.code) return fail(400, { form });
		const site = (await currentSite())!;
		let versionId: string;
		try {
			({ versionId } = await procedures.createProcedure(
				personOf(user),
				site.id,
				form.data.code,
				form.data.content,
				event.getClientAddress()
			));
		} catch (e) {
			if (e instanceof RecordError) {
				if (e.field === 'code') return setError(form, 'code', e.message, { status: e.status });
				if (e.field === 'followUpCode')
					return setError(form, 'content.followUpCode', e.message, { status: e.status });
				return message(form, { kind: 'error', text: e.message }, { status: e.status });
			}
			throw e;
		}
		redirect(303, `/procedures/versions/${versionId}`);
	}
};
