import { statusOf } from '$lib/account-status';
import { listAccounts } from '$lib/server/accounts';
import { requireRole } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'administrator');
	const accounts = await listAccounts();
	return {
		accounts: accounts.map((a) => ({
			id: a.id,
			username: a.username,
			fullName: a.fullName,
			roles: a.roles,
			status: statusOf(a),
			lastSignInAt: a.lastSignInAt?.toISOString() ?? null
		}))
	};
};
