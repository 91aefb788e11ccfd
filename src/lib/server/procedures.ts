import canonicalize from 'canonicalize';
import { asc, desc, eq, inArray, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import {
	cleanContent,
	procedureContentSchema,
	procedureVersionSignedContent,
	type ProcedureContent
} from '$lib/schemas/procedure';
import { recordEventNow } from './audit/now';
import type { User } from './auth/guard';
import { db, type Transaction } from './db/index';
import {
	procedureApprovals,
	procedureRevisions,
	procedures,
	procedureVersions
} from './db/schema/index';
import {
	appendRecordEvent,
	isUniqueViolation,
	mustHold,
	needReason,
	personOf,
	RecordError,
	type Recorder
} from './records';
import {
	reauthenticate,
	recordSignature,
	signaturesOf,
	type SignedRecord
} from './signatures/index';

/**
 * Procedures under change control (4/10; MR1, MR5): Draft → Approved → Superseded. A draft is
 * saved as revisions (each save a new row); Quality approves its newest revision with an
 * Approved e-signature, by someone who wrote none of it; approving supersedes the version that
 * was effective. An approved version never changes (the database refuses new revisions); a
 * change is a new draft version, started with a reason.
 */
export type VersionStatus = 'draft' | 'approved' | 'superseded';
export const versionStatusLabels: Record<VersionStatus, string> = {
	draft: 'Draft',
	approved: 'Approved',
	superseded: 'Superseded'
};

export const SIGNED_TYPE = 'procedure_version';

type VersionRow = typeof procedureVersions.$inferSelect;
type ApprovalRow = typeof procedureApprovals.$inferSelect;

/** Status from the rows: approved versions below the newest approved one are superseded. */
function statuses(versions: VersionRow[], approvals: ApprovalRow[]) {
	const approved = new Set(approvals.map((a) => a.versionId));
	const newestApproved = Math.max(
		0,
		...versions.filter((v) => approved.has(v.id)).map((v) => v.version)
	);
	return new Map(
		versions.map((v) => [
			v.id,
			(!approved.has(v.id)
				? 'draft'
				: v.version === newestApproved
					? 'approved'
					: 'superseded') as VersionStatus
		])
	);
}

async function latestRevisions(tx: Transaction, versionIds: string[]) {
	if (!versionIds.length) return new Map<string, typeof procedureRevisions.$inferSelect>();
	const rows = await tx
		.select()
		.from(procedureRevisions)
		.where(inArray(procedureRevisions.versionId, versionIds))
		.orderBy(asc(procedureRevisions.revision));
	return new Map(rows.map((r) => [r.versionId, r]));
}

export async function listProcedures(siteId: string) {
	const all = await db()
		.select()
		.from(procedures)
		.where(eq(procedures.siteId, siteId))
		.orderBy(asc(procedures.code));
	if (!all.length) return [];
	const versions = await db()
		.select()
		.from(procedureVersions)
		.where(
			inArray(
				procedureVersions.procedureId,
				all.map((p) => p.id)
			)
		);
	const approvals = versions.length
		? await db()
				.select()
				.from(procedureApprovals)
				.where(
					inArray(
						procedureApprovals.versionId,
						versions.map((v) => v.id)
					)
				)
		: [];
	// Each procedure's versions on their own: the newest approved version of one procedure does
	// not supersede another's.
	const status = new Map(
		all.flatMap((p) => [
			...statuses(
				versions.filter((v) => v.procedureId === p.id),
				approvals
			)
		])
	);
	const revisions = await latestRevisions(
		db(),
		versions.map((v) => v.id)
	);
	return all.map((p) => {
		const own = versions
			.filter((v) => v.procedureId === p.id)
			.sort((a, b) => b.version - a.version);
		const effective = own.find((v) => status.get(v.id) === 'approved');
		const draft = own.find((v) => status.get(v.id) === 'draft');
		const shown = effective ?? draft ?? own[0]!;
		const content = revisions.get(shown.id)!.content;
		return {
			id: p.id,
			code: p.code,
			title: content.title,
			appliesTo: content.appliesTo,
			steps: content.steps.length,
			effectiveVersion: effective?.version ?? null,
			draftVersion: draft?.version ?? null,
			draftVersionId: draft?.id ?? null
		};
	});
}

/** A procedure with every version (newest first), each with status, newest revision and approval. */
export async function getProcedure(id: string) {
	const [identity] = await db().select().from(procedures).where(eq(procedures.id, id));
	if (!identity) return undefined;
	const versions = await db()
		.select()
		.from(procedureVersions)
		.where(eq(procedureVersions.procedureId, id))
		.orderBy(desc(procedureVersions.version));
	const approvals = await db()
		.select()
		.from(procedureApprovals)
		.where(
			inArray(
				procedureApprovals.versionId,
				versions.map((v) => v.id)
			)
		);
	const status = statuses(versions, approvals);
	const revisions = await latestRevisions(
		db(),
		versions.map((v) => v.id)
	);
	return {
		id,
		code: identity.code,
		versions: versions.map((v) => {
			const revision = revisions.get(v.id)!;
			return {
				id: v.id,
				version: v.version,
				status: status.get(v.id)!,
				reason: v.reason,
				startedBy: v.recordedByName,
				startedAt: v.recordedAt,
				revision: revision.revision,
				title: revision.content.title,
				content: revision.content,
				savedBy: revision.recordedByName,
				savedAt: revision.recordedAt,
				approval: approvals.find((a) => a.versionId === v.id) ?? null
			};
		})
	};
}

/** One version with its procedure, content, authors, status and signatures (each checked against the content). */
export async function getVersion(versionId: string) {
	const [version] = await db()
		.select()
		.from(procedureVersions)
		.where(eq(procedureVersions.id, versionId));
	if (!version) return undefined;
	const procedure = (await getProcedure(version.procedureId))!;
	const mine = procedure.versions.find((v) => v.id === versionId)!;
	const revisions = await db()
		.select({
			revision: procedureRevisions.revision,
			recordedBy: procedureRevisions.recordedBy,
			recordedByName: procedureRevisions.recordedByName,
			recordedAt: procedureRevisions.recordedAt
		})
		.from(procedureRevisions)
		.where(eq(procedureRevisions.versionId, versionId))
		.orderBy(desc(procedureRevisions.revision));
	const authors = new Set(
		[version.recordedBy, ...revisions.map((r) => r.recordedBy)].filter((x): x is string => !!x)
	);
	const signatures = await signaturesOf(signedRecord(procedure.code, mine));
	return { procedure, version: mine, revisions, authors: [...authors], signatures };
}

/** The record an approval signs: the version's id and its canonical content (tested in procedure.spec.ts). */
export function signedRecord(
	code: string,
	v: { id: string; version: number; revision: number; content: ProcedureContent }
): SignedRecord {
	return {
		type: SIGNED_TYPE,
		id: v.id,
		content: procedureVersionSignedContent({
			code,
			version: v.version,
			revision: v.revision,
			content: v.content
		})
	};
}

/** The content checked by the same schema as the form (callers other than forms are checked too), then cleaned. */
async function validContent(content: ProcedureContent, ownCode: string) {
	const parsed = procedureContentSchema.safeParse(content);
	if (!parsed.success)
		throw new RecordError(
			`The procedure content is not valid: ${parsed.error.issues[0]?.message ?? 'check the fields'}.`,
			'content'
		);
	const clean = cleanContent(parsed.data);
	await followUpExists(clean, ownCode);
	return clean;
}

/** A follow-up must name another procedure that exists, so that work can be planned from it. */
async function followUpExists(content: ProcedureContent, ownCode: string) {
	const code = content.followUpCode;
	if (!code) return;
	if (code === ownCode.toUpperCase())
		throw new RecordError('A procedure cannot be its own follow-up.', 'followUpCode');
	if (!(await findProcedureByCode(code)))
		throw new RecordError(
			`There is no procedure ${code}: write it first, or leave the follow-up empty.`,
			'followUpCode'
		);
}

/** A new procedure: version 1 as a draft with its first revision. */
export async function createProcedure(
	by: Recorder,
	siteId: string,
	code: string,
	content: ProcedureContent,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'write procedures');
	const clean = await validContent(content, code);
	const id = randomUUID();
	const versionId = randomUUID();
	try {
		await db().transaction(async (tx) => {
			const rec = await appendRecordEvent(tx, by, {
				action: 'procedure.create',
				entityType: 'procedure_version',
				entityId: versionId,
				newValues: { procedureId: id, code, version: 1, revision: 1, content: clean },
				clientAddress
			});
			await tx.insert(procedures).values({ id, siteId, code, createdAt: rec.recordedAt });
			await tx
				.insert(procedureVersions)
				.values({ id: versionId, procedureId: id, version: 1, reason: null, ...rec });
			await tx
				.insert(procedureRevisions)
				.values({ id: randomUUID(), versionId, revision: 1, content: clean, ...rec });
		});
	} catch (e) {
		if (isUniqueViolation(e))
			throw new RecordError(`The procedure code ${code} is already in use.`, 'code', 409);
		throw e;
	}
	return { id, versionId };
}

/** Saves a draft as a new revision; refused if the version is approved or someone saved meanwhile. */
export async function saveDraft(
	by: Recorder,
	versionId: string,
	fromRevision: number,
	content: ProcedureContent,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'write procedures');
	const [owner] = await db()
		.select({ code: procedures.code })
		.from(procedureVersions)
		.innerJoin(procedures, eq(procedures.id, procedureVersions.procedureId))
		.where(eq(procedureVersions.id, versionId));
	if (!owner) throw new RecordError('No such procedure version.', undefined, 404);
	const clean = await validContent(content, owner.code);
	try {
		return await db().transaction(async (tx) => {
			await lockVersion(tx, versionId);
			const [approval] = await tx
				.select({ id: procedureApprovals.id })
				.from(procedureApprovals)
				.where(eq(procedureApprovals.versionId, versionId));
			if (approval)
				throw new RecordError(
					'This version is approved and can no longer be changed: start a new version.',
					undefined,
					409
				);
			const latest = (await latestRevisions(tx, [versionId])).get(versionId);
			if (!latest) throw new RecordError('No such procedure version.', undefined, 404);
			if (latest.revision !== fromRevision)
				throw new RecordError(
					`Someone saved revision ${latest.revision} meanwhile: reload to see it, then make your change again.`,
					undefined,
					409
				);
			if (canonicalize(latest.content) === canonicalize(clean)) return latest.revision;
			const revision = latest.revision + 1;
			const rec = await appendRecordEvent(tx, by, {
				action: 'procedure.draft_save',
				entityType: 'procedure_version',
				entityId: versionId,
				newValues: { revision, content: clean },
				previousValues: { revision: latest.revision },
				clientAddress
			});
			await tx
				.insert(procedureRevisions)
				.values({ id: randomUUID(), versionId, revision, content: clean, ...rec });
			return revision;
		});
	} catch (e) {
		if (isUniqueViolation(e, 'procedure_revisions_number'))
			throw new RecordError(
				'Someone saved at the same moment: reload and make your change again.',
				undefined,
				409
			);
		throw e;
	}
}

/** The same lock the database's revision and approval triggers take (migration 0007). */
async function lockVersion(tx: Transaction, versionId: string) {
	await tx.execute(
		sql`select pg_advisory_xact_lock(hashtextextended(${'procedure_version:' + versionId}, 0))`
	);
}

/** Starts a new draft version from the newest version's content, with the reason for the change. */
export async function startNewVersion(
	by: Recorder,
	procedureId: string,
	reason: string,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner'], 'write procedures');
	needReason(reason);
	const found = await getProcedure(procedureId);
	if (!found) throw new RecordError('No such procedure.', undefined, 404);
	const open = found.versions.find((v) => v.status === 'draft');
	if (open)
		throw new RecordError(
			`Version ${open.version} is still a draft: change that draft instead of starting another.`,
			'reason',
			409
		);
	const base = found.versions[0]!;
	const versionId = randomUUID();
	try {
		await db().transaction(async (tx) => {
			const rec = await appendRecordEvent(tx, by, {
				action: 'procedure.new_version',
				entityType: 'procedure_version',
				entityId: versionId,
				newValues: {
					procedureId,
					code: found.code,
					version: base.version + 1,
					basedOn: base.version
				},
				reason,
				clientAddress
			});
			await tx
				.insert(procedureVersions)
				.values({ id: versionId, procedureId, version: base.version + 1, reason, ...rec });
			await tx
				.insert(procedureRevisions)
				.values({ id: randomUUID(), versionId, revision: 1, content: base.content, ...rec });
		});
	} catch (e) {
		if (isUniqueViolation(e, 'procedure_versions_number'))
			throw new RecordError('Someone started a new version at the same moment.', 'reason', 409);
		throw e;
	}
	return versionId;
}

/**
 * Quality approves a draft with an Approved e-signature: password first (3/10), then in one
 * transaction the signature over the newest revision's content and the approval row. The
 * approver wrote none of the draft (segregation of duties; the database checks it too).
 */
export async function approveVersion(
	user: User,
	versionId: string,
	seenRevision: number,
	password: string,
	clientAddress: string | null = null
) {
	const by = personOf(user);
	await mustHold(by, ['quality'], 'approve procedures');
	const found = await getVersion(versionId);
	if (!found) throw new RecordError('No such procedure version.', undefined, 404);
	const check = (v: typeof found) => {
		if (v.version.status !== 'draft')
			throw new RecordError('This version is already approved.', undefined, 409);
		if (v.authors.includes(user.id))
			throw new RecordError(
				'You wrote part of this version: someone who did not write it must approve it.',
				undefined,
				403
			);
		if (v.version.revision !== seenRevision)
			throw new RecordError(
				'The draft was saved again after you opened it. The page now shows the new revision: close this, read it, then sign.',
				undefined,
				409
			);
	};
	await followUpExists(found.version.content, found.procedure.code);
	const record = signedRecord(found.procedure.code, found.version);
	if (found.authors.includes(user.id) && found.version.status === 'draft')
		// A refused signing is an event too (AT7), before the refusal reaches the person.
		await recordEventNow({
			actor: by,
			action: 'signature.refused',
			entityType: record.type,
			entityId: record.id,
			newValues: { meaning: 'approved', reason: 'author_cannot_approve' },
			clientAddress
		});
	check(found);
	await reauthenticate(user, password, { record, meaning: 'approved' }, clientAddress);
	return db().transaction(async (tx) => {
		await lockVersion(tx, versionId);
		// Under the lock, in this transaction: still a draft, still that revision, still not an author.
		const [approval] = await tx
			.select({ id: procedureApprovals.id })
			.from(procedureApprovals)
			.where(eq(procedureApprovals.versionId, versionId));
		const latest = (await latestRevisions(tx, [versionId])).get(versionId)!;
		const authors = await tx
			.select({ by: procedureRevisions.recordedBy })
			.from(procedureRevisions)
			.where(eq(procedureRevisions.versionId, versionId));
		check({
			...found,
			version: {
				...found.version,
				status: approval ? 'approved' : 'draft',
				revision: latest.revision
			},
			authors: [...found.authors, ...authors.map((a) => a.by ?? '')]
		});
		const signature = await recordSignature(tx, user, record, 'approved', clientAddress);
		const superseded = found.procedure.versions.find((v) => v.status === 'approved');
		const rec = await appendRecordEvent(tx, by, {
			action: 'procedure.approve',
			entityType: 'procedure_version',
			entityId: versionId,
			newValues: {
				version: found.version.version,
				revision: found.version.revision,
				signatureId: signature.id,
				contentHash: signature.contentHash,
				supersedes: superseded?.version ?? null
			},
			clientAddress
		});
		await tx.insert(procedureApprovals).values({
			id: randomUUID(),
			versionId,
			revision: found.version.revision,
			signatureId: signature.id,
			...rec
		});
		return signature;
	});
}

/** The effective (approved) version of a procedure: the one new work must pin (MR1, 5/10). */
export async function effectiveVersion(procedureId: string) {
	const found = await getProcedure(procedureId);
	return found?.versions.find((v) => v.status === 'approved');
}

export async function findProcedureByCode(code: string) {
	const [row] = await db()
		.select({ id: procedures.id })
		.from(procedures)
		.where(eq(procedures.code, code.toUpperCase()));
	return row?.id;
}
