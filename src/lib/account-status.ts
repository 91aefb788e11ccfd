/** States of an account as people see them (derived from the account row). */
export type AccountStatus = 'active' | 'locked' | 'deactivated' | 'must_change_password';

export const accountStatusLabels: Record<AccountStatus, string> = {
	active: 'Active',
	locked: 'Locked',
	deactivated: 'Deactivated',
	must_change_password: 'New password due'
};

export function statusOf(a: {
	active: boolean;
	lockedAt: Date | null;
	mustChangePassword: boolean;
}): AccountStatus {
	if (!a.active) return 'deactivated';
	if (a.lockedAt) return 'locked';
	if (a.mustChangePassword) return 'must_change_password';
	return 'active';
}
