import type { Role } from '$lib/roles';
import { auditEvent } from '../db/schema/index';
import type { Transaction } from '../db/index';

/** Who did it: a person (with the printed name and roles at that moment), a system job, or nobody known. */
export type Actor =
	| { kind: 'person'; id: string; name: string; roles: readonly Role[] }
	| { kind: 'system'; name: string }
	| { kind: 'anonymous' };

export type AuditInput = {
	actor: Actor;
	/** Lowercase dotted words, e.g. auth.sign_in, account.roles_change. */
	action: string;
	entityType: string;
	entityId?: string | null;
	newValues?: Record<string, unknown> | null;
	previousValues?: Record<string, unknown> | null;
	reason?: string | null;
	clientAddress?: string | null;
};

/**
 * Appends one event to the audit trail inside the caller's transaction, so that the event and
 * the change it describes commit or roll back together. Every account and sign-in event goes
 * through here; 3/10 chains the events by hash.
 */
export async function recordEvent(tx: Transaction, input: AuditInput) {
	const { actor } = input;
	const [row] = await tx
		.insert(auditEvent)
		.values({
			actorKind: actor.kind,
			actorId: actor.kind === 'person' ? actor.id : null,
			actorName: actor.kind === 'person' || actor.kind === 'system' ? actor.name : 'unknown',
			actorRoles: actor.kind === 'person' ? [...actor.roles] : [],
			action: input.action,
			entityType: input.entityType,
			entityId: input.entityId ?? null,
			newValues: input.newValues ?? null,
			previousValues: input.previousValues ?? null,
			reason: input.reason ?? null,
			clientAddress: input.clientAddress ?? null
		})
		.returning({ seq: auditEvent.seq, at: auditEvent.at });
	return row!;
}
