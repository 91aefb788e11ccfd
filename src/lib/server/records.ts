import type { Role } from '$lib/roles';
import { recordEvent, type Actor, type AuditInput } from './audit/index';
import type { User } from './auth/guard';

/**
 * Shared by the modules that write GMP records (equipment, instruments, parts, procedures,
 * qualifications, and the work of 5/10): who acts, the refusal they get, and the audit event
 * that goes with every row, in the same transaction.
 */

/** A refused change; `field` names the form field the message belongs beside. */
export class RecordError extends Error {
	constructor(
		message: string,
		readonly field?: string,
		readonly status: 400 | 403 | 404 | 409 = 400
	) {
		super(message);
	}
}

/** Who records: a signed-in person, or a system job (the demo seed, the PM scheduler of 9/10). */
export type Recorder = Extract<Actor, { kind: 'person' } | { kind: 'system' }>;

export const personOf = (user: User): Recorder => ({
	kind: 'person',
	id: user.id,
	name: user.name,
	roles: user.roles
});

/**
 * The module's own role check, behind the route's (defence in depth): a person needs one of the
 * roles; an administrator never changes GMP records (AC3). System jobs are trusted callers.
 */
export function mustHold(by: Recorder, roles: readonly Role[], what: string) {
	if (by.kind !== 'person') return;
	if (by.roles.includes('administrator') || !by.roles.some((r) => roles.includes(r)))
		throw new RecordError(`Your roles do not allow you to ${what}.`, undefined, 403);
}

/** Appends the audit event of a record and returns the columns that tie the row to it. */
export async function appendRecordEvent(
	tx: Parameters<typeof recordEvent>[0],
	by: Recorder,
	input: Omit<AuditInput, 'actor'>
) {
	const event = await recordEvent(tx, { ...input, actor: by });
	return {
		recordedBy: by.kind === 'person' ? by.id : null,
		recordedByName: by.kind === 'person' ? by.name : `system: ${by.name}`,
		recordedAt: new Date(event.at),
		auditSeq: event.seq
	};
}

/** True when a PostgreSQL error is a unique-constraint violation (a lost race or a repeated id). */
export function isUniqueViolation(e: unknown, constraint?: string) {
	const err = (e as { cause?: unknown })?.cause ?? e;
	const pg = err as { code?: string; constraint_name?: string };
	return pg?.code === '23505' && (!constraint || pg.constraint_name === constraint);
}

/** Every change of GMP data carries a reason (AT2); the forms ask for it, and this refuses a blank one. */
export function needReason(reason: string) {
	if (!reason || !reason.trim())
		throw new RecordError('Give a reason: it is kept in the audit trail.', 'reason');
}
