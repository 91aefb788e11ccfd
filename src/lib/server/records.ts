import canonicalize from 'canonicalize';
import type { Role } from '$lib/roles';
import { recordEvent, type Actor, type AuditInput } from './audit/index';
import { siteToday } from '$lib/fitness';
import { recordEventNow } from './audit/now';
import { currentSite } from './plant';
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
		readonly status: 400 | 403 | 404 | 409 | 413 | 422 = 400
	) {
		super(message);
	}
}

/** The site, or the refusal when it is not set up yet (the writers of 5/10 and 9/10). */
export async function siteOrFail() {
	const site = await currentSite();
	if (!site) throw new RecordError('The site is not set up.', undefined, 409);
	return site;
}

/** Who records: a signed-in person, or a system job (the demo seed, the PM scheduler of 9/10). */
/** …or a plant system's API token (9/10: usage reports). */
export type Recorder = Extract<Actor, { kind: 'person' } | { kind: 'system' } | { kind: 'token' }>;

export const personOf = (user: User): Recorder => ({
	kind: 'person',
	id: user.id,
	name: user.name,
	roles: user.roles
});

/**
 * The module's own role check, behind the route's (defence in depth): a person needs one of the
 * roles; an administrator never changes GMP records (AC3). A refusal is itself an audit event
 * (AT7). System jobs are trusted callers.
 */
export async function mustHold(
	by: Recorder,
	roles: readonly Role[],
	what: string,
	entity?: { type: string; id: string | null }
) {
	if (by.kind !== 'person') return;
	if (by.roles.includes('administrator') || !by.roles.some((r) => roles.includes(r)))
		await refuse(by, `Your roles do not allow you to ${what}.`, { needed: roles, what }, entity);
}

/** Records a refused request as `auth.access_denied` (AT7), then throws the 403. */
export async function refuse(
	by: Recorder,
	message: string,
	details: Record<string, unknown>,
	entity?: { type: string; id: string | null }
): Promise<never> {
	await recordEventNow({
		actor: by,
		action: 'auth.access_denied',
		entityType: entity?.type ?? 'function',
		entityId: entity?.id ?? null,
		newValues: { ...details, message }
	});
	throw new RecordError(message, undefined, 403);
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
		recordedByName: by.kind === 'person' ? by.name : `${by.kind}: ${by.name}`,
		recordedAt: new Date(event.at),
		auditSeq: event.seq
	};
}

/**
 * Refuses a day after today at the site (a calibration, training or delivery cannot have happened
 * yet): contemporaneous records (DI1).
 */
export async function notInFuture(day: string, field: string, what: string) {
	const site = await currentSite();
	if (site && day > siteToday(site.timeZone))
		throw new RecordError(`The ${what} cannot be after today at the site.`, field);
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
		throw new RecordError('Give a reason: it is kept in the audit trail.', 'reason', 422);
}

/**
 * What every change of versioned master data does, inside the caller's transaction: the version
 * the person changed (`fromVersion`) is still the newest, something did change, and the audit
 * event carries the new and previous values with the reason. Returns the new version number and
 * the columns that tie the new version row to its event.
 */
export async function nextVersion(
	tx: Parameters<typeof recordEvent>[0],
	by: Recorder,
	change: {
		latest: { version: number } | undefined;
		fromVersion: number;
		/** "equipment", "instrument", "part": for the messages. */
		what: string;
		before: Record<string, unknown>;
		next: Record<string, unknown>;
		action: string;
		entityType: string;
		entityId: string;
		reason: string;
		clientAddress: string | null;
	}
) {
	const { latest } = change;
	if (!latest) throw new RecordError(`No such ${change.what}.`, undefined, 404);
	if (latest.version !== change.fromVersion)
		throw new RecordError(
			`Someone saved version ${latest.version} meanwhile: reload the page and make the change again.`,
			'reason',
			409
		);
	// jsonb does not keep key order: compare canonical forms (RFC 8785).
	if (canonicalize(change.next) === canonicalize(change.before))
		throw new RecordError('Nothing was changed: there is no new version to save.', 'reason');
	const version = latest.version + 1;
	const rec = await appendRecordEvent(tx, by, {
		action: change.action,
		entityType: change.entityType,
		entityId: change.entityId,
		newValues: { version, ...change.next },
		previousValues: { version: latest.version, ...change.before },
		reason: change.reason,
		clientAddress: change.clientAddress
	});
	return { version, rec };
}

/** Runs a change; two saves of the same new version number at once: the second gets 409. */
export async function oneAtATime<T>(versionConstraint: string, change: () => Promise<T>) {
	try {
		return await change();
	} catch (e) {
		if (isUniqueViolation(e, versionConstraint))
			throw new RecordError(
				'Someone saved a new version at the same moment: reload the page and make the change again.',
				'reason',
				409
			);
		throw e;
	}
}
