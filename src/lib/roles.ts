/**
 * The five roles (shared/DESIGN.md "People and roles"). A person may hold several. Stored in
 * lowercase; shown with these labels.
 */
export const roles = ['technician', 'planner', 'quality', 'inspector', 'administrator'] as const;
export type Role = (typeof roles)[number];

export const roleLabels: Record<Role, string> = {
	technician: 'Technician',
	planner: 'Planner',
	quality: 'Quality',
	inspector: 'Inspector',
	administrator: 'Administrator'
};

export const roleDescriptions: Record<Role, string> = {
	technician: 'executes work orders, signs steps Performed, verifies others’ steps where qualified',
	planner: 'manages equipment, instruments, parts, procedures and schedules; plans work',
	quality: 'approves procedures, dispositions deviations, reviews records, releases equipment',
	inspector: 'reads every record and the audit trail; exports (read-only)',
	administrator: 'manages accounts, roles and lockouts; never signs or changes GMP records'
};

export const isRole = (value: string): value is Role =>
	(roles as readonly string[]).includes(value);
