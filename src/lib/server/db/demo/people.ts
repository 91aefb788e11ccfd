import { eq } from 'drizzle-orm';
import type { User } from '../../auth/guard';
import { db } from '../index';
import { accounts } from '../schema/index';

/** A demo account as the signed-in person the demo seed acts as (the accounts are seeded first). */
export async function demoPerson(username: string): Promise<User> {
	const [a] = await db().select().from(accounts).where(eq(accounts.username, username));
	if (!a) throw new Error(`demo account ${username} is missing: seed the accounts first`);
	return {
		id: a.id,
		username: a.username,
		name: a.fullName,
		email: a.email,
		roles: a.roles,
		mustChangePassword: false
	};
}
