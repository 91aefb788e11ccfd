import type { User } from '../auth/guard';
import { db } from '../db/index';
import { notifyVerificationFailed } from '../notify';
import { kickOutbox } from '../outbox';
import { recordEvent } from './index';
import type { Verification } from './verify';

/**
 * A failed chain verification (8/10 item 3): itself an audit event, and an e-mail to Quality and
 * the Administrators, written in one transaction (the mail goes out after it commits).
 */
export async function recordVerificationFailure(
	user: User,
	result: Verification,
	clientAddress: string | null
) {
	await db().transaction(async (tx) => {
		const event = await recordEvent(tx, {
			actor: { kind: 'person', id: user.id, name: user.name, roles: user.roles },
			action: 'audit.verify_failed',
			entityType: 'audit_trail',
			newValues: {
				events: result.events,
				firstBadSeq: result.firstBadSeq,
				problem: result.problem
			},
			clientAddress
		});
		await notifyVerificationFailed(tx, result, user.name, event.seq);
	});
	kickOutbox();
}
