import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { attemptSignIn } from '../../src/lib/server/auth/sign-in';
import { delayAfter } from '../../src/lib/server/auth/throttle';
import { authSettings } from '../../src/lib/server/auth/settings';
import { DEMO_PASSWORD, seedDemoAccounts } from '../../src/lib/server/db/seed';
import { appDatabase, setEnv } from './helpers/app-database';

// REQUIREMENTS SE5 (throttling and lockout, audited), AT7 (failed sign-ins are events), ES4.
let t: Awaited<ReturnType<typeof appDatabase>>;
let address = 0;
/** A different client address per test, so address counts never mix between tests. */
const nextAddress = () => `192.0.2.${++address}`; // RFC 5737 documentation range

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoAccounts(t.owner);
});
afterAll(async () => t?.drop());
beforeEach(() => {
	setEnv({
		AUTH_DELAY_FREE_PER_USERNAME: '100',
		AUTH_DELAY_FREE_PER_ADDRESS: '100',
		AUTH_LOCKOUT_FAILURES: '5'
	});
});

const events = (username: string) =>
	t.ownerSql`select action, actor_kind, new_values, client_address from audit_event
		where new_values->>'username' = ${username} and action like 'auth.%' order by seq`;

describe('attemptSignIn', () => {
	it('signs in with the right password, case and spaces in the username aside', async () => {
		const result = await attemptSignIn({
			username: '  Planner ',
			password: DEMO_PASSWORD,
			clientAddress: nextAddress()
		});
		expect(result).toMatchObject({
			ok: true,
			account: { username: 'planner', name: 'Priya Lindqvist' }
		});
	});

	it('gives the same answer for a wrong password and an unknown username, and audits both (AT7)', async () => {
		const ip = nextAddress();
		expect(
			await attemptSignIn({ username: 'quality', password: 'wrong', clientAddress: ip })
		).toEqual({ ok: false, code: 'credentials' });
		expect(
			await attemptSignIn({ username: 'nobody-here', password: 'wrong', clientAddress: ip })
		).toEqual({ ok: false, code: 'credentials' });
		const [wrong] = await events('quality');
		expect(wrong).toMatchObject({
			action: 'auth.sign_in_failed',
			actor_kind: 'anonymous',
			new_values: { username: 'quality', reason: 'wrong_password', consecutiveFailures: 1 },
			client_address: ip
		});
		const [unknown] = await events('nobody-here');
		expect(unknown).toMatchObject({
			action: 'auth.sign_in_failed',
			new_values: { reason: 'unknown_username' }
		});
	});

	it('locks the account at the 5th consecutive failure; then even the right password is refused (SE5)', async () => {
		const ip = nextAddress();
		for (let i = 1; i <= 4; i++) {
			expect(
				await attemptSignIn({ username: 'tech2', password: `guess ${i}`, clientAddress: ip })
			).toMatchObject({ code: 'credentials' });
		}
		expect(
			await attemptSignIn({ username: 'tech2', password: 'guess 5', clientAddress: ip })
		).toEqual({ ok: false, code: 'locked' });
		expect(
			await attemptSignIn({ username: 'tech2', password: DEMO_PASSWORD, clientAddress: ip })
		).toEqual({ ok: false, code: 'locked' });
		const [account] =
			await t.ownerSql`select locked_at, failed_sign_ins from accounts where username = 'tech2'`;
		expect(account!.locked_at).not.toBeNull();
		expect(account!.failed_sign_ins).toBe(5);
		const actions = (await events('tech2')).map((e) => [e.action, e.new_values.reason ?? null]);
		expect(actions).toEqual([
			['auth.sign_in_failed', 'wrong_password'],
			['auth.sign_in_failed', 'wrong_password'],
			['auth.sign_in_failed', 'wrong_password'],
			['auth.sign_in_failed', 'wrong_password'],
			['auth.sign_in_failed', 'wrong_password'],
			['auth.lockout', null],
			['auth.sign_in_failed', 'locked']
		]);
	});

	it('a success resets the consecutive count', async () => {
		const ip = nextAddress();
		await attemptSignIn({ username: 'inspector', password: 'guess', clientAddress: ip });
		await attemptSignIn({ username: 'inspector', password: DEMO_PASSWORD, clientAddress: ip });
		const [account] =
			await t.ownerSql`select failed_sign_ins from accounts where username = 'inspector'`;
		expect(account!.failed_sign_ins).toBe(0);
	});

	it('delays further attempts per username after the free failures, doubling up to the cap', async () => {
		setEnv({ AUTH_DELAY_FREE_PER_USERNAME: '2' });
		const settings = authSettings();
		expect([1, 2, 3, 4, 5, 6, 7, 8, 9].map((n) => delayAfter(n, 2, settings))).toEqual([
			0, 0, 1, 2, 4, 8, 16, 32, 60
		]);

		const ip = nextAddress();
		await attemptSignIn({ username: 'ghost-1', password: 'x', clientAddress: ip });
		await attemptSignIn({ username: 'ghost-1', password: 'x', clientAddress: ip });
		expect(await attemptSignIn({ username: 'ghost-1', password: 'x', clientAddress: ip })).toEqual({
			ok: false,
			code: 'credentials'
		});
		// Third failure: the next try must wait 1 s.
		const throttled = await attemptSignIn({
			username: 'ghost-1',
			password: 'x',
			clientAddress: nextAddress()
		});
		expect(throttled).toEqual({ ok: false, code: 'throttled', retryAfter: 1 });
		const audited = await events('ghost-1');
		expect(audited.at(-1)).toMatchObject({
			action: 'auth.sign_in_failed',
			new_values: { reason: 'throttled' }
		});
		await new Promise((r) => setTimeout(r, 1100));
		expect(
			await attemptSignIn({ username: 'ghost-1', password: 'x', clientAddress: ip })
		).toMatchObject({ code: 'credentials' });
	});

	it('delays per address too, whatever the username', async () => {
		setEnv({ AUTH_DELAY_FREE_PER_ADDRESS: '3' });
		const ip = nextAddress();
		for (const name of ['a-1', 'a-2', 'a-3', 'a-4'])
			await attemptSignIn({ username: name, password: 'x', clientAddress: ip });
		expect(
			await attemptSignIn({ username: 'a-5', password: 'x', clientAddress: ip })
		).toMatchObject({ code: 'throttled' });
		expect(
			await attemptSignIn({ username: 'a-5', password: 'x', clientAddress: nextAddress() })
		).toMatchObject({ code: 'credentials' });
	});

	it('refuses a deactivated account with the same answer as a wrong password', async () => {
		await t.ownerSql`update accounts set active = false where username = 'tech1'`;
		expect(
			await attemptSignIn({
				username: 'tech1',
				password: DEMO_PASSWORD,
				clientAddress: nextAddress()
			})
		).toEqual({
			ok: false,
			code: 'credentials'
		});
		const [last] = (await events('tech1')).slice(-1);
		expect(last!.new_values.reason).toBe('deactivated');
	});
});

describe('attemptSignIn under concurrency', () => {
	it('30 parallel wrong guesses at one account: exactly 5 are checked, the rest find it locked', async () => {
		setEnv({
			AUTH_DELAY_FREE_PER_USERNAME: '100',
			AUTH_DELAY_FREE_PER_ADDRESS: '100',
			AUTH_LOCKOUT_FAILURES: '5'
		});
		const results = await Promise.all(
			Array.from({ length: 30 }, (_, i) =>
				attemptSignIn({
					username: 'planner',
					password: `parallel guess ${i}`,
					clientAddress: nextAddress()
				})
			)
		);
		expect(results.filter((r) => !r.ok && r.code === 'locked')).toHaveLength(26);
		expect(results.filter((r) => !r.ok && r.code === 'credentials')).toHaveLength(4);
		const [account] =
			await t.ownerSql`select failed_sign_ins, locked_at from accounts where username = 'planner'`;
		expect(account!.failed_sign_ins).toBe(5);
		expect(account!.locked_at).not.toBeNull();
		// The right password cannot slip in afterwards either.
		expect(
			await attemptSignIn({
				username: 'planner',
				password: DEMO_PASSWORD,
				clientAddress: nextAddress()
			})
		).toEqual({ ok: false, code: 'locked' });
	});
});

describe('the delay forgets old failures', () => {
	it('failures older than AUTH_DELAY_RESET_MINUTES no longer delay, and counting starts again', async () => {
		setEnv({
			AUTH_DELAY_FREE_PER_USERNAME: '1',
			AUTH_DELAY_FREE_PER_ADDRESS: '100',
			AUTH_DELAY_RESET_MINUTES: '15'
		});
		const ip = nextAddress();
		await attemptSignIn({ username: 'ghost-old', password: 'x', clientAddress: ip });
		await attemptSignIn({ username: 'ghost-old', password: 'x', clientAddress: ip });
		expect(
			await attemptSignIn({ username: 'ghost-old', password: 'x', clientAddress: ip })
		).toMatchObject({ code: 'throttled' });
		await t.ownerSql`update sign_in_throttle set last_failure_at = now() - interval '16 minutes' where key = 'u:ghost-old'`;
		expect(
			await attemptSignIn({ username: 'ghost-old', password: 'x', clientAddress: ip })
		).toMatchObject({ code: 'credentials' });
		const [row] = await t.ownerSql`select failures from sign_in_throttle where key = 'u:ghost-old'`;
		expect(row!.failures).toBe(1);
	});

	it('a successful sign-in clears its username’s count but not the address’s', async () => {
		setEnv({ AUTH_DELAY_FREE_PER_USERNAME: '100', AUTH_DELAY_FREE_PER_ADDRESS: '100' });
		const ip = nextAddress();
		await attemptSignIn({ username: 'ghost-a', password: 'x', clientAddress: ip });
		await attemptSignIn({ username: 'tech1', password: 'wrong', clientAddress: ip });
		await t.ownerSql`update accounts set active = true where username = 'tech1'`;
		await attemptSignIn({ username: 'tech1', password: DEMO_PASSWORD, clientAddress: ip });
		const rows =
			await t.ownerSql`select key, failures from sign_in_throttle where key in ('u:tech1', ${'a:' + ip}) order by key`;
		expect(rows).toEqual([{ key: `a:${ip}`, failures: 2 }]);
	});
});
