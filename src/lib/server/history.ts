import { error } from '@sveltejs/kit';
import { eq, inArray } from 'drizzle-orm';
import type { SignatureMeaning } from '$lib/signature-meanings';
import { browseAudit, type AuditRow, type RecordRef } from './audit/browse';
import { db } from './db/index';
import { accounts, deviations, signatures } from './db/schema/index';
import { getEquipment } from './equipment';
import { getVersion } from './procedures';
import { getWorkOrder, loadState } from './work-orders';

/** What a History is of: its name, a line about it, and the page of the record itself. */
export type HistorySubject = {
	kind: RecordRef['kind'];
	id: string;
	title: string;
	subtitle: string;
};

/** A signature as a History shows it beside its event: who, meaning, when, and whether it still matches. */
export type HistorySignature = {
	id: string;
	meaning: SignatureMeaning;
	signerName: string;
	signerRoles: string[];
	signedAt: string;
	recordType: string;
	contentHash: string;
	/** Whether the signed record's content today still hashes to what was signed (ES3). */
	matches: boolean;
};

export type HistoryEvent = AuditRow & { signature: HistorySignature | null };

/** The page size of a History (events oldest first, by seq cursor like the Audit trail). */
export const HISTORY_PAGE = 200;

const signatureIdOf = (e: AuditRow) => {
	const v = e.newValues as { signatureId?: unknown } | null;
	return typeof v?.signatureId === 'string' ? v.signatureId : null;
};

/**
 * One record's History (8/10): every event of the record in time order, old → new with reasons,
 * and for each event that carries a signature, that signature and whether it still matches the
 * record it signed as the record is today. Undefined when there is no such record.
 */
export async function recordHistory(ref: RecordRef, after?: number) {
	const subject = await subjectOf(ref);
	if (!subject) return undefined;
	const page = await browseAudit({ record: ref, order: 'asc', limit: HISTORY_PAGE, after });
	const checked = await signaturesOf(page.events);
	const events: HistoryEvent[] = page.events.map((e) => ({
		...e,
		signature: checked.get(signatureIdOf(e) ?? '') ?? null
	}));
	return { subject, events, next: page.next };
}

async function subjectOf(ref: RecordRef): Promise<HistorySubject | undefined> {
	switch (ref.kind) {
		case 'work_order':
		case 'step': {
			const [workOrderId, key] = ref.id.split(':') as [string, string | undefined];
			const s = await loadState(db(), workOrderId);
			if (!s) return undefined;
			if (ref.kind === 'work_order')
				return {
					...ref,
					title: `Work order ${s.wo.number}`,
					subtitle: `${s.wo.equipmentTag} · ${s.wo.procedureCode} version ${s.wo.procedureVersion}`
				};
			const position = s.content.steps.findIndex((x) => x.key === key);
			if (position < 0) return undefined;
			return {
				...ref,
				title: `Step ${position + 1}: ${s.content.steps[position]!.title}`,
				subtitle: `Work order ${s.wo.number} · ${s.wo.equipmentTag}`
			};
		}
		case 'equipment': {
			const e = await getEquipment(ref.id);
			if (!e) return undefined;
			return {
				...ref,
				title: `Equipment ${e.tag}`,
				subtitle: `${e.current.description} · its own events and those of every work order on it`
			};
		}
		case 'procedure_version': {
			const v = await getVersion(ref.id);
			if (!v) return undefined;
			return {
				...ref,
				title: `${v.procedure.code} version ${v.version.version}`,
				subtitle: v.version.title
			};
		}
		case 'account': {
			const [a] = await db()
				.select({ username: accounts.username, fullName: accounts.fullName })
				.from(accounts)
				.where(eq(accounts.id, ref.id));
			if (!a) return undefined;
			return {
				...ref,
				title: `${a.fullName} (${a.username})`,
				subtitle: 'Account: roles, sign-ins, passwords, locks, qualifications'
			};
		}
	}
}

/**
 * The signatures the events name, each checked against its record as it is now: a work order's
 * (its steps', its Executed, trail review, release, deviations') by the work order's own check, a
 * procedure version's by the version's. Equipment and accounts are not signed.
 */
async function signaturesOf(events: AuditRow[]) {
	const ids = [...new Set(events.map(signatureIdOf).filter((x): x is string => x !== null))];
	const out = new Map<string, HistorySignature>();
	if (!ids.length) return out;
	const rows = await db().select().from(signatures).where(inArray(signatures.id, ids));
	const workOrderIds = new Set<string>();
	const versionIds = new Set<string>();
	const deviationIds: string[] = [];
	for (const r of rows) {
		if (r.recordType === 'procedure_version') versionIds.add(r.recordId);
		else if (r.recordType === 'deviation') deviationIds.push(r.recordId);
		else if (r.recordType.startsWith('work_order')) workOrderIds.add(r.recordId.split(':')[0]!);
	}
	if (deviationIds.length)
		for (const d of await db()
			.select({ workOrderId: deviations.workOrderId })
			.from(deviations)
			.where(inArray(deviations.id, deviationIds)))
			workOrderIds.add(d.workOrderId);
	const matches = new Map<string, boolean>();
	for (const id of workOrderIds)
		for (const s of (await getWorkOrder(id))?.signatures ?? []) matches.set(s.id, s.matches);
	for (const id of versionIds)
		for (const s of (await getVersion(id))?.signatures ?? []) matches.set(s.id, s.matches);
	for (const r of rows)
		out.set(r.id, {
			id: r.id,
			meaning: r.meaning,
			signerName: r.signerName,
			signerRoles: r.signerRoles,
			signedAt: r.signedAt.toISOString(),
			recordType: r.recordType,
			contentHash: r.contentHash,
			// A signature no check reaches is not claimed to match.
			matches: matches.get(r.id) ?? false
		});
	return out;
}

/**
 * A History page's data: the reader's roles are checked by the caller; a later page is named by
 * ?after=<seq>. A record that does not exist is 404; a bad cursor is 400, with a clear message.
 */
export async function historyPageData(
	url: URL,
	ref: RecordRef | null,
	reader: { roles: readonly string[] }
) {
	if (!ref) error(404, 'There is no such record.');
	const raw = url.searchParams.get('after');
	const after = raw === null || raw === '' ? undefined : Number(raw);
	if (after !== undefined && !(Number.isSafeInteger(after) && after > 0))
		error(
			400,
			'after is the seq of an event (a whole number from 1); open the first page instead.'
		);
	const history = await recordHistory(ref, after);
	if (!history) error(404, 'There is no such record.');
	const admin = reader.roles.includes('administrator');
	return {
		...history,
		// An account's own page is for administrators; the other records' pages are for every reader.
		linked: ref.kind !== 'account' || admin,
		later: after !== undefined,
		canExport: reader.roles.some((r) => r === 'quality' || r === 'inspector')
	};
}
