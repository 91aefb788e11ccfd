import { sql } from 'drizzle-orm';
import { boolean, check, integer, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import type { Role } from '../../../roles';

const at = (name: string) => timestamp(name, { withTimezone: true, precision: 3 });

/**
 * A person's account. Usernames are unique for ever: an account is deactivated, never deleted,
 * so a username can never be given to someone else (21 CFR 11.100(a), 11.300(a); ES5). The app
 * role may UPDATE only the columns a migration names, never `id`, `username` or `created_at`.
 */
export const accounts = pgTable(
	'accounts',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		username: text('username').notNull().unique(),
		fullName: text('full_name').notNull(),
		email: text('email').notNull(),
		roles: text('roles')
			.array()
			.$type<Role[]>()
			.notNull()
			.default(sql`'{}'::text[]`),
		passwordHash: text('password_hash').notNull(),
		/** Set by an administrator's reset: the next sign-in must choose a new password (ES6). */
		mustChangePassword: boolean('must_change_password').notNull().default(false),
		active: boolean('active').notNull().default(true),
		/** Set after too many failed sign-ins or signings; only an administrator clears it. */
		lockedAt: at('locked_at'),
		/** Consecutive failed sign-ins since the last success or unlock. */
		failedSignIns: integer('failed_sign_ins').notNull().default(0),
		passwordChangedAt: at('password_changed_at').notNull().defaultNow(),
		lastSignInAt: at('last_sign_in_at'),
		deactivatedAt: at('deactivated_at'),
		createdAt: at('created_at').notNull().defaultNow()
	},
	(t) => [
		check('accounts_username_form', sql`${t.username} ~ '^[a-z0-9][a-z0-9._-]{1,31}$'`),
		check(
			'accounts_roles_known',
			sql`${t.roles} <@ array['technician', 'planner', 'quality', 'inspector', 'administrator']::text[]`
		)
	]
);

/**
 * Server-side sessions: the session cookie (an Auth.js JWT) carries only this row's id; every
 * request checks the row, so sign-out, deactivation and timeouts take effect at once.
 */
export const sessions = pgTable('sessions', {
	id: uuid('id').primaryKey().defaultRandom(),
	accountId: uuid('account_id')
		.notNull()
		.references(() => accounts.id),
	createdAt: at('created_at').notNull().defaultNow(),
	lastSeenAt: at('last_seen_at').notNull().defaultNow(),
	endedAt: at('ended_at'),
	/** sign_out · idle · absolute · deactivated · password_changed · password_reset · locked */
	endReason: text('end_reason'),
	clientAddress: text('client_address'),
	userAgent: text('user_agent')
});

/** Consecutive failed sign-ins per key ("u:<username>" or "a:<address>"), for the progressive delay. */
export const signInThrottle = pgTable('sign_in_throttle', {
	key: text('key').primaryKey(),
	failures: integer('failures').notNull(),
	lastFailureAt: at('last_failure_at').notNull().defaultNow()
});
