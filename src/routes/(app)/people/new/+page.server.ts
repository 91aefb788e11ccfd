import { fail } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { newAccountSchema } from '$lib/schemas/accounts';
import { AccountError, createAccount } from '$lib/server/accounts';
import { requireRole } from '$lib/server/auth/guard';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'administrator');
	return { form: await superValidate(zod4(newAccountSchema)) };
};

export const actions: Actions = {
	default: async (event) => {
		const admin = await requireRole(event, 'administrator');
		const form = await superValidate(event.request, zod4(newAccountSchema));
		if (!form.valid) return fail(400, { form });
		try {
			const created = await createAccount(admin, form.data, event.getClientAddress());
			return { form, created };
		} catch (e) {
			if (e instanceof AccountError)
				return setError(form, 'username', e.message, { status: e.status as 409 });
			throw e;
		}
	}
};
