import { z } from 'zod';
import { roles } from '$lib/roles';
import { isStorableText, unstorableTextMessage } from './text';

/** Forms of sign-in and account administration; the server checks them again (superforms + zod). */

export const signInSchema = z.object({
	username: z
		.string()
		.trim()
		.min(1, 'Enter your username.')
		.max(64, 'A username has at most 64 characters.')
		.refine(isStorableText, unstorableTextMessage),
	password: z
		.string()
		.min(1, 'Enter your password.')
		.max(1024, 'That is longer than any password here.'),
	redirectTo: z.string().max(2000).default('/')
});

export const usernameSchema = z
	.string()
	.trim()
	.toLowerCase()
	.regex(
		/^[a-z0-9][a-z0-9._-]{1,31}$/,
		'2–32 characters: lowercase letters, digits, dot, dash or underscore, starting with a letter or digit.'
	);

export { reasonSchema } from './reason';
import { reasonSchema } from './reason';

const roleList = z
	.array(z.enum(roles))
	.min(1, 'Choose at least one role.')
	// Administrators are kept apart from record content (REQUIREMENTS AC3): never a GMP role besides.
	.refine(
		(list) =>
			!list.includes('administrator') ||
			list.every((r) => r === 'administrator' || r === 'inspector'),
		{
			message:
				'An Administrator holds no Technician, Planner or Quality role: administrators never sign or change GMP records.'
		}
	);

export const newAccountSchema = z.object({
	username: usernameSchema,
	fullName: z
		.string()
		.trim()
		.min(2, 'Enter the person’s full name as it should print on signatures.')
		.max(120)
		.refine(isStorableText, unstorableTextMessage),
	email: z.email('Enter an e-mail address such as name@example.org.').max(254),
	roles: roleList
});

export const changeRolesSchema = z.object({ roles: roleList, reason: reasonSchema });
export const reasonOnlySchema = z.object({ reason: reasonSchema });

export const changePasswordSchema = z
	.object({
		currentPassword: z.string().min(1, 'Enter your current password.').max(1024),
		newPassword: z.string().min(1, 'Enter a new password.').max(1024),
		confirmPassword: z.string().max(1024)
	})
	.refine((v) => v.newPassword === v.confirmPassword, {
		path: ['confirmPassword'],
		message: 'The two new passwords are not the same.'
	});
