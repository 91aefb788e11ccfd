import { db } from '../db/index';
import { recordEvent, type AuditInput } from './index';

/** One event in a transaction of its own, for events that accompany no other change. */
export function recordEventNow(input: AuditInput) {
	return db().transaction((tx) => recordEvent(tx, input));
}
