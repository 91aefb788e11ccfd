import { describe, expect, it } from 'vitest';
import { changeRolesSchema, newAccountSchema } from './accounts';

// Segregation of duties (shared/DESIGN.md; REQUIREMENTS AC3): administrators are kept apart from
// record content, so the Administrator role is never held together with a GMP role.
describe('role combinations', () => {
	const account = { username: 'jdoe', fullName: 'Jun Doe', email: 'jdoe@ostmere.example' };
	it.each([['technician'], ['planner'], ['quality']])(
		'refuses Administrator together with %s',
		(role) => {
			const result = newAccountSchema.safeParse({ ...account, roles: ['administrator', role] });
			expect(result.success).toBe(false);
			expect(result.error?.issues[0]?.message).toMatch(
				/administrators never sign or change GMP records/
			);
			expect(
				changeRolesSchema.safeParse({ roles: [role, 'administrator'], reason: 'x' }).success
			).toBe(false);
		}
	);
	it('accepts Administrator alone, or with Inspector (read-only), and any mix of the GMP roles', () => {
		expect(newAccountSchema.safeParse({ ...account, roles: ['administrator'] }).success).toBe(true);
		expect(
			newAccountSchema.safeParse({ ...account, roles: ['administrator', 'inspector'] }).success
		).toBe(true);
		expect(
			newAccountSchema.safeParse({ ...account, roles: ['technician', 'planner', 'quality'] })
				.success
		).toBe(true);
	});
	it('refuses NUL characters in names with a clear message', () => {
		const result = newAccountSchema.safeParse({
			...account,
			fullName: 'Jun\u0000Doe',
			roles: ['technician']
		});
		expect(result.error?.issues[0]?.message).toMatch(/cannot be stored/);
	});
});
