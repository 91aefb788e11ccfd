import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { verifyChain } from '../../src/lib/server/audit/verify';
import type { User } from '../../src/lib/server/auth/guard';
import { DEMO_PASSWORD, seedDemoAccounts } from '../../src/lib/server/db/seed';
import {
	contentHash,
	sign,
	signatureMatches,
	signaturesOf,
	SignatureError,
	type SignedRecord
} from '../../src/lib/server/signatures/index';
import { appDatabase, setEnv } from './helpers/app-database';

// Electronic signatures (issue 3/10 item 6; REQUIREMENTS ES1, ES3, ES4, ES7, AC3).
// The record kinds of later issues bring their own canonical content; here a step-like record
// stands in for them.
let t: Awaited<ReturnType<typeof appDatabase>>;
const people: Record<string, User> = {};
const ip = '198.51.100.20';

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoAccounts(t.owner);
	setEnv({ AUTH_LOCKOUT_FAILURES: '5' });
	for (const row of await t.ownerSql`select id, username, full_name, email, roles from accounts`) {
		people[row.username] = {
			id: row.id,
			username: row.username,
			name: row.full_name,
			email: row.email,
			roles: row.roles,
			mustChangePassword: false
		};
	}
});
afterAll(async () => t?.drop());

const step = (value: number): SignedRecord => ({
	type: 'step',
	id: 'wo-1/step-3',
	content: {
		instruction: 'Measure the diaphragm thickness',
		value,
		unit: 'mm',
		limits: { min: 3.6, max: 4.4 },
		result: 'within'
	}
});

describe('signing', () => {
	it('stores printed name, meaning, database time and the content hash, with its audit event (ES1)', async () => {
		const signed = await sign({
			signer: people.tech1!,
			password: DEMO_PASSWORD,
			record: step(4.02),
			meaning: 'performed',
			clientAddress: ip
		});
		const [row] =
			await t.ownerSql`select signer_name, signer_roles, meaning, signed_at, encode(content_hash, 'hex') as hash, audit_seq::int as seq
			from signatures where id = ${signed.id}`;
		expect(row).toMatchObject({
			signer_name: 'Tomas Verhoek',
			signer_roles: ['technician'],
			meaning: 'performed',
			hash: contentHash(step(4.02))
		});
		const [event] =
			await t.ownerSql`select action, at, new_values from audit_event where seq = ${row!.seq}`;
		expect(event).toMatchObject({
			action: 'signature.sign',
			new_values: { signatureId: signed.id, meaning: 'performed', contentHash: row!.hash }
		});
		expect(new Date(row!.signed_at).toISOString()).toBe(new Date(event!.at).toISOString());
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});

	it('a signature checked after its record changed no longer matches; it cannot move to another record (ES3)', async () => {
		const signed = await sign({
			signer: people.tech2!,
			password: DEMO_PASSWORD,
			record: step(4.1),
			meaning: 'verified',
			clientAddress: ip
		});
		expect(await signatureMatches(signed.id, step(4.1))).toBe(true);
		expect(await signatureMatches(signed.id, step(4.11))).toBe(false);
		expect(await signatureMatches(signed.id, { ...step(4.1), id: 'wo-2/step-3' })).toBe(false);
		const listed = await signaturesOf(step(4.11));
		expect(listed.find((s) => s.id === signed.id)?.matches).toBe(false);
	});

	it('the content hash is RFC 8785: key order does not matter, values do', () => {
		const a = contentHash({ type: 't', id: '1', content: { b: 1, a: [1, 2] } });
		expect(contentHash({ type: 't', id: '1', content: { a: [1, 2], b: 1 } })).toBe(a);
		expect(contentHash({ type: 't', id: '1', content: { a: [2, 1], b: 1 } })).not.toBe(a);
	});
});

describe('refusals', () => {
	it('a wrong password is refused and audited, counts toward the lockout, and stores no signature (ES4)', async () => {
		const before = await t.ownerSql`select count(*)::int as n from signatures`;
		await expect(
			sign({
				signer: people.planner!,
				password: 'not my password',
				record: step(4),
				meaning: 'performed',
				clientAddress: ip
			})
		).rejects.toMatchObject({
			code: 'password',
			status: 401
		});
		const after = await t.ownerSql`select count(*)::int as n from signatures`;
		expect(after[0]!.n).toBe(before[0]!.n);
		const [failed] =
			await t.ownerSql`select actor_name, new_values from audit_event where action = 'signature.failed' order by seq desc limit 1`;
		expect(failed).toMatchObject({
			actor_name: 'Priya Lindqvist',
			new_values: { reason: 'wrong_password', consecutiveFailures: 1 }
		});
		// A right password afterwards resets the count.
		await sign({
			signer: people.planner!,
			password: DEMO_PASSWORD,
			record: step(4),
			meaning: 'performed',
			clientAddress: ip
		});
		const [account] =
			await t.ownerSql`select failed_sign_ins from accounts where username = 'planner'`;
		expect(account!.failed_sign_ins).toBe(0);
	});

	it('five failed signings lock the account (ES7); a locked account cannot sign', async () => {
		for (let i = 1; i <= 4; i++) {
			await expect(
				sign({
					signer: people.quality!,
					password: `guess ${i}`,
					record: step(4),
					meaning: 'reviewed',
					clientAddress: ip
				})
			).rejects.toMatchObject({ code: 'password' });
		}
		await expect(
			sign({
				signer: people.quality!,
				password: 'guess 5',
				record: step(4),
				meaning: 'reviewed',
				clientAddress: ip
			})
		).rejects.toMatchObject({
			code: 'locked',
			status: 423
		});
		await expect(
			sign({
				signer: people.quality!,
				password: DEMO_PASSWORD,
				record: step(4),
				meaning: 'reviewed',
				clientAddress: ip
			})
		).rejects.toBeInstanceOf(SignatureError);
		const [lockout] =
			await t.ownerSql`select new_values from audit_event where action = 'auth.lockout' and entity_id = ${people.quality!.id}`;
		expect(lockout!.new_values).toMatchObject({ username: 'quality', consecutiveFailures: 5 });
	});

	it('an administrator cannot sign GMP records, even with the right password (AC3)', async () => {
		await expect(
			sign({
				signer: people.admin!,
				password: DEMO_PASSWORD,
				record: step(4),
				meaning: 'approved',
				clientAddress: ip
			})
		).rejects.toMatchObject({
			code: 'not_allowed',
			status: 403
		});
		const [refused] =
			await t.ownerSql`select new_values from audit_event where action = 'signature.refused' order by seq desc limit 1`;
		expect(refused!.new_values).toMatchObject({ reason: 'administrator' });
	});

	it('signatures are append-only: the owner’s UPDATE and DELETE are refused', async () => {
		await expect(t.ownerSql`update signatures set meaning = 'approved'`).rejects.toThrow(
			/append-only/
		);
		await expect(t.ownerSql`delete from signatures`).rejects.toThrow(/append-only/);
		await expect(t.appSql`update signatures set meaning = 'approved'`).rejects.toMatchObject({
			code: '42501'
		});
	});
});
