import { fail } from '@sveltejs/kit';
import * as tokens from '$lib/server/api-tokens';
import { requireRole } from '$lib/server/auth/guard';
import { RecordError } from '$lib/server/records';
import type { Actions, PageServerLoad } from './$types';

/** API tokens for the plant's systems (9/10): Administrators create (shown once) and revoke them. */
export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'administrator');
	return {
		tokens: await tokens.listApiTokens(),
		scopes: tokens.tokenScopes.map((s) => ({ value: s, words: tokens.tokenScopeWords[s] }))
	};
};

const text = (data: FormData, name: string) => {
	const v = data.get(name);
	return typeof v === 'string' ? v : '';
};

export const actions: Actions = {
	create: async (event) => {
		const admin = await requireRole(event, 'administrator');
		const data = await event.request.formData().catch(() => new FormData());
		const name = text(data, 'name');
		const scope = text(data, 'scope') || 'usage';
		if (!tokens.tokenScopes.includes(scope as tokens.TokenScope))
			return fail(400, { action: 'create', name, message: 'Choose what the token may do.' });
		try {
			const made = await tokens.createApiToken(
				admin,
				{ name, scope: scope as tokens.TokenScope },
				event.getClientAddress()
			);
			return { created: { name: name.trim(), token: made.token, scope } };
		} catch (e) {
			if (e instanceof RecordError)
				return fail(e.status, { action: 'create', name, message: e.message });
			throw e;
		}
	},
	revoke: async (event) => {
		const admin = await requireRole(event, 'administrator');
		const data = await event.request.formData().catch(() => new FormData());
		const id = text(data, 'id');
		const reason = text(data, 'reason');
		if (!/^[0-9a-f-]{36}$/i.test(id))
			return fail(400, { action: 'revoke', id, message: 'Choose a token to revoke.' });
		if (reason.trim().length < 3)
			return fail(422, {
				action: 'revoke',
				id,
				message: 'Give the reason for revoking the token.'
			});
		try {
			await tokens.revokeApiToken(admin, id, reason.trim(), event.getClientAddress());
			return { revoked: id };
		} catch (e) {
			if (e instanceof RecordError)
				return fail(e.status, { action: 'revoke', id, message: e.message });
			throw e;
		}
	}
};
