import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { registerPartSchema } from '$lib/schemas/master';
import { requireRole } from '$lib/server/auth/guard';
import * as parts from '$lib/server/parts';
import { currentSite } from '$lib/server/plant';
import { personOf, RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'planner');
	return { form: await superValidate(zod4(registerPartSchema)) };
};

export const actions: Actions = {
	default: async (event) => {
		const user = await requireRole(event, 'planner');
		const form = await superValidate(event.request, zod4(registerPartSchema));
		if (!form.valid) return fail(400, { form });
		const site = (await currentSite())!;
		let id: string;
		try {
			id = await parts.registerPart(personOf(user), site.id, form.data, event.getClientAddress());
		} catch (e) {
			if (e instanceof RecordError)
				return setError(form, 'partNumber', e.message, { status: e.status });
			throw e;
		}
		redirect(303, `/parts/${id}`);
	}
};
