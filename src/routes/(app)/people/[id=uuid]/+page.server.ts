import { error } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { statusOf } from '$lib/account-status';
import { changeRolesSchema, reasonOnlySchema } from '$lib/schemas/accounts';
import * as accounts from '$lib/server/accounts';
import { requireRole } from '$lib/server/auth/guard';
import { refused } from '$lib/server/forms';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const admin = await requireRole(event, 'administrator');
	const account = await accounts.getAccount(event.params.id);
	if (!account) error(404, 'No such account.');
	const rolesForm = await superValidate(
		{ roles: account.roles, reason: '' },
		zod4(changeRolesSchema),
		{
			id: 'roles',
			errors: false
		}
	);
	const reasonForm = (id: string) => superValidate(zod4(reasonOnlySchema), { id });
	return {
		account: {
			id: account.id,
			username: account.username,
			fullName: account.fullName,
			email: account.email,
			roles: account.roles,
			status: statusOf(account),
			failedSignIns: account.failedSignIns,
			lockedAt: account.lockedAt?.toISOString() ?? null,
			lastSignInAt: account.lastSignInAt?.toISOString() ?? null,
			createdAt: account.createdAt.toISOString(),
			deactivatedAt: account.deactivatedAt?.toISOString() ?? null
		},
		isSelf: admin.id === account.id,
		rolesForm,
		deactivateForm: await reasonForm('deactivate'),
		unlockForm: await reasonForm('unlock'),
		resetForm: await reasonForm('reset')
	};
};

/** Runs one administration change with its reason form; refusals come back beside the field. */
async function withReason(
	event: RequestEvent,
	id: 'deactivate' | 'unlock' | 'reset',
	change: (
		admin: Awaited<ReturnType<typeof requireRole>>,
		reason: string
	) => Promise<string | void>,
	done: string
) {
	const admin = await requireRole(event, 'administrator');
	const form = await superValidate(event.request, zod4(reasonOnlySchema), { id });
	if (!form.valid) return refused(form);
	try {
		const oneTimePassword = await change(admin, form.data.reason);
		form.data.reason = '';
		if (oneTimePassword) return { form, oneTimePassword };
		return message(form, { kind: 'ok', text: done });
	} catch (e) {
		if (e instanceof accounts.AccountError)
			return setError(form, 'reason', e.message, { status: e.status as 409 });
		throw e;
	}
}

export const actions: Actions = {
	roles: async (event) => {
		const admin = await requireRole(event, 'administrator');
		const form = await superValidate(event.request, zod4(changeRolesSchema), { id: 'roles' });
		if (!form.valid) return refused(form);
		try {
			await accounts.changeRoles(
				admin,
				event.params.id,
				form.data.roles,
				form.data.reason,
				event.getClientAddress()
			);
		} catch (e) {
			if (e instanceof accounts.AccountError)
				return setError(form, 'reason', e.message, { status: e.status as 403 });
			throw e;
		}
		form.data.reason = '';
		return message(form, { kind: 'ok', text: 'Roles changed. The change is in the audit trail.' });
	},
	deactivate: (event) =>
		withReason(
			event,
			'deactivate',
			(admin, reason) =>
				accounts.deactivateAccount(admin, event.params.id, reason, event.getClientAddress()),
			'Account deactivated. Its sessions have ended; its records stay attributed to it.'
		),
	unlock: (event) =>
		withReason(
			event,
			'unlock',
			(admin, reason) =>
				accounts.unlockAccount(admin, event.params.id, reason, event.getClientAddress()),
			'Account unlocked.'
		),
	reset: (event) =>
		withReason(
			event,
			'reset',
			(admin, reason) =>
				accounts.resetPassword(admin, event.params.id, reason, event.getClientAddress()),
			'Password reset.'
		)
};
