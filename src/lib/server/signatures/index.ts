import canonicalize from 'canonicalize';
import { and, asc, eq } from 'drizzle-orm';
import { createHash, randomUUID } from 'node:crypto';
import type { SignatureMeaning } from '$lib/signature-meanings';
import { recordEvent } from '../audit/index';
import type { User } from '../auth/guard';
import { countFailedPassword, lockIfDue } from '../auth/lockout';
import { verifyPassword } from '../auth/passwords';
import { db, type Transaction } from '../db/index';
import { accounts, signatures } from '../db/schema/index';
import { kickOutbox } from '../outbox';
import { hit, tooManyWords } from '../rate-limit';

/**
 * Electronic signatures (21 CFR 11.50, 11.70, 11.200; EU GMP Annex 11 §14; REQUIREMENTS ES1–ES8).
 *
 * A record to be signed is given as its kind, its id and its canonical content: each kind of
 * record defines that content in exactly one tested function (a step's entries, a work order's
 * state, a procedure version's whole content — they arrive with their records). The signature
 * stores SHA-256 over the RFC 8785 JSON of {type, id, content}: it can neither move to another
 * record (another id gives another hash) nor survive a change of the content.
 */
export type SignedRecord = { type: string; id: string; content: unknown };

export function contentHash(record: SignedRecord): string {
	const text = canonicalize({ type: record.type, id: record.id, content: record.content });
	if (text === undefined) throw new Error('the record content cannot be canonicalised');
	return createHash('sha256').update(text, 'utf8').digest('hex');
}

export class SignatureError extends Error {
	constructor(
		message: string,
		readonly code: 'password' | 'locked' | 'not_allowed' | 'rate_limited',
		readonly status: 401 | 403 | 423 | 429,
		/** Seconds to wait (a 429's Retry-After). */
		readonly retryAfter?: number
	) {
		super(message);
	}
}

const personOf = (user: User) =>
	({ kind: 'person', id: user.id, name: user.name, roles: user.roles }) as const;

/**
 * Step 1 of every signature, before the business transaction opens: the signer re-enters their
 * password (ES4). A wrong one is refused, audited, and counts toward the lockout (ES7); a locked
 * or deactivated account and an administrator (who never signs GMP records, AC3) are refused.
 */
export async function reauthenticate(
	signer: User,
	password: string,
	what: { record: SignedRecord; meaning: SignatureMeaning },
	clientAddress: string | null
) {
	const refused = async (reason: string) =>
		db().transaction((tx) =>
			recordEvent(tx, {
				actor: personOf(signer),
				action: 'signature.refused',
				entityType: what.record.type,
				entityId: what.record.id,
				newValues: { meaning: what.meaning, reason },
				clientAddress
			})
		);
	if (signer.roles.includes('administrator')) {
		await refused('administrator');
		throw new SignatureError('Administrators do not sign GMP records.', 'not_allowed', 403);
	}
	// Signatures per person and minute (rate-limit.ts): a script guessing through the signing
	// dialog is stopped before the password is even checked (the lockout counts the guesses too).
	const rate = hit('sign_person', signer.id);
	if (!rate.ok) {
		await refused('rate_limited');
		throw new SignatureError(
			tooManyWords('signatures', rate.retryAfter),
			'rate_limited',
			429,
			rate.retryAfter
		);
	}
	// The account row stays locked from the check to the count: parallel attempts cannot pass the lockout.
	const outcome = await db().transaction(async (tx) => {
		const [account] = await tx
			.select()
			.from(accounts)
			.where(eq(accounts.id, signer.id))
			.for('update');
		if (!account || !account.active || account.lockedAt)
			return account?.lockedAt ? 'locked' : 'inactive';
		if (await verifyPassword(account.passwordHash, password)) {
			await tx.update(accounts).set({ failedSignIns: 0 }).where(eq(accounts.id, signer.id));
			return 'ok';
		}
		const count = await countFailedPassword(tx, signer.id);
		await recordEvent(tx, {
			actor: personOf(signer),
			action: 'signature.failed',
			entityType: what.record.type,
			entityId: what.record.id,
			newValues: {
				meaning: what.meaning,
				reason: 'wrong_password',
				consecutiveFailures: count.failures
			},
			clientAddress
		});
		return (await lockIfDue(tx, account, count, clientAddress)) ? 'locked_now' : 'wrong';
	});
	if (outcome === 'locked_now') kickOutbox(); // the Administrators' e-mail
	if (outcome === 'ok') return;
	if (outcome === 'locked' || outcome === 'inactive') {
		await refused(outcome);
		throw new SignatureError(
			'This account is locked: an administrator must unlock it.',
			'locked',
			423
		);
	}
	if (outcome === 'locked_now') {
		throw new SignatureError(
			'Wrong password. The account is now locked: an administrator must unlock it.',
			'locked',
			423
		);
	}
	throw new SignatureError(
		'That is not your password. The signature was not made.',
		'password',
		401
	);
}

/**
 * Step 2, inside the business transaction: the signature row (printed name, roles, meaning,
 * database time, content hash) and its audit event, committed with the change it signs.
 */
export async function recordSignature(
	tx: Transaction,
	signer: User,
	record: SignedRecord,
	meaning: SignatureMeaning,
	clientAddress: string | null
) {
	const id = randomUUID();
	const hash = contentHash(record);
	const event = await recordEvent(tx, {
		actor: personOf(signer),
		action: 'signature.sign',
		entityType: record.type,
		entityId: record.id,
		newValues: { signatureId: id, meaning, contentHash: hash, signerName: signer.name },
		clientAddress
	});
	await tx.insert(signatures).values({
		id,
		recordType: record.type,
		recordId: record.id,
		meaning,
		signerId: signer.id,
		signerName: signer.name,
		signerRoles: [...signer.roles],
		signedAt: new Date(event.at),
		contentHash: hash,
		auditSeq: event.seq
	});
	return { id, signedAt: event.at, contentHash: hash, auditSeq: event.seq };
}

/** Both steps, for a signature that accompanies no other change. */
export async function sign(input: {
	signer: User;
	password: string;
	record: SignedRecord;
	meaning: SignatureMeaning;
	clientAddress: string | null;
}) {
	await reauthenticate(input.signer, input.password, input, input.clientAddress);
	return db().transaction((tx) =>
		recordSignature(tx, input.signer, input.record, input.meaning, input.clientAddress)
	);
}

/** The signatures of a record, each with whether it still matches the record's current content (ES3). */
export async function signaturesOf(record: SignedRecord) {
	const rows = await db()
		.select()
		.from(signatures)
		.where(and(eq(signatures.recordType, record.type), eq(signatures.recordId, record.id)))
		.orderBy(asc(signatures.signedAt), asc(signatures.auditSeq));
	const current = contentHash(record);
	return rows.map((row) => ({ ...row, matches: row.contentHash === current }));
}

/** Whether a given signature belongs to this record as it is now: false for another record or a changed one. */
export async function signatureMatches(signatureId: string, record: SignedRecord) {
	const [row] = await db()
		.select({
			recordType: signatures.recordType,
			recordId: signatures.recordId,
			contentHash: signatures.contentHash
		})
		.from(signatures)
		.where(eq(signatures.id, signatureId));
	return Boolean(
		row &&
		row.recordType === record.type &&
		row.recordId === record.id &&
		row.contentHash === contentHash(record)
	);
}
