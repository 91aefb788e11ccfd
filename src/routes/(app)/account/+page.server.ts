import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { changePasswordSchema } from '$lib/schemas/accounts';
import { AccountError, changeOwnPassword, getAccount } from '$lib/server/accounts';
import { requireRole } from '$lib/server/auth/guard';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = await requireRole(event);
	const account = (await getAccount(user.id))!;
	return {
		account: {
			username: account.username,
			fullName: account.fullName,
			email: account.email,
			roles: account.roles,
			lastSignInAt: account.lastSignInAt?.toISOString() ?? null,
			mustChangePassword: account.mustChangePassword
		},
		form: await superValidate(zod4(changePasswordSchema))
	};
};

export const actions: Actions = {
	password: async (event) => {
		const user = await requireRole(event);
		const form = await superValidate(event.request, zod4(changePasswordSchema));
		const blank = () => {
			form.data = { currentPassword: '', newPassword: '', confirmPassword: '' };
			return form;
		};
		if (!form.valid) return fail(400, { form: blank() });
		try {
			await changeOwnPassword(user, form.data, event.getClientAddress());
		} catch (e) {
			if (e instanceof AccountError) {
				return setError(blank(), (e.field ?? 'newPassword') as 'newPassword', e.message);
			}
			throw e;
		}
		// Every session of the account has ended, this one too.
		redirect(303, '/login?changed=1');
	}
};
