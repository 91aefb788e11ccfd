import { and, asc, desc, eq, inArray } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { addDays, covers, qualifiedOn, siteToday } from '$lib/fitness';
import type { z } from 'zod';
import type { qualificationSchema } from '$lib/schemas/master';
import { db, type Transaction } from './db/index';
import { accounts, procedures, qualifications, qualificationWithdrawals } from './db/schema/index';
import { currentSite } from './plant';
import {
	appendRecordEvent,
	isUniqueViolation,
	mustHold,
	needReason,
	notInFuture,
	RecordError,
	refuse,
	type Recorder
} from './records';

/**
 * Qualifications (4/10, AC4): training records, append-only. A record covers a procedure and all
 * its versions from the day trained to the day it expires; a later record extends it.
 */
export type Qualification = z.infer<typeof qualificationSchema>;

export async function isQualified(accountId: string, procedureId: string, day: string) {
	return (await qualifiedAmong(db(), [accountId], procedureId, day)).length > 0;
}

/** Those of `accountIds` qualified on the procedure on `day` (the training records and their withdrawals). */
export async function qualifiedAmong(
	tx: Transaction,
	accountIds: string[],
	procedureId: string,
	day: string
) {
	if (!accountIds.length) return [];
	const rows = await tx
		.select({
			accountId: qualifications.accountId,
			trainedOn: qualifications.trainedOn,
			expiresOn: qualifications.expiresOn,
			withdrawnOn: qualificationWithdrawals.effectiveOn
		})
		.from(qualifications)
		.leftJoin(
			qualificationWithdrawals,
			eq(qualificationWithdrawals.qualificationId, qualifications.id)
		)
		.where(
			and(
				inArray(qualifications.accountId, accountIds),
				eq(qualifications.procedureId, procedureId)
			)
		);
	return accountIds.filter((id) =>
		qualifiedOn(
			rows.filter((r) => r.accountId === id),
			day
		)
	);
}

/** Training records, newest first, with whether each person is qualified on `day` and lapses within 30 days. */
export async function listQualifications(day: string, accountId?: string) {
	const rows = await db()
		.select({
			id: qualifications.id,
			accountId: qualifications.accountId,
			personName: accounts.fullName,
			username: accounts.username,
			procedureId: qualifications.procedureId,
			procedureCode: procedures.code,
			trainedOn: qualifications.trainedOn,
			expiresOn: qualifications.expiresOn,
			trainer: qualifications.trainer,
			note: qualifications.note,
			recordedByName: qualifications.recordedByName,
			recordedAt: qualifications.recordedAt,
			withdrawnOn: qualificationWithdrawals.effectiveOn,
			withdrawalReason: qualificationWithdrawals.reason
		})
		.from(qualifications)
		.leftJoin(
			qualificationWithdrawals,
			eq(qualificationWithdrawals.qualificationId, qualifications.id)
		)
		.innerJoin(accounts, eq(accounts.id, qualifications.accountId))
		.innerJoin(procedures, eq(procedures.id, qualifications.procedureId))
		.where(accountId ? eq(qualifications.accountId, accountId) : undefined)
		.orderBy(asc(accounts.fullName), asc(procedures.code), desc(qualifications.expiresOn));
	const soon = addDays(day, 30);
	// One line per person and procedure: the record that reaches furthest decides.
	const byPair = new Map<string, (typeof rows)[number][]>();
	for (const r of rows) {
		const key = `${r.accountId}:${r.procedureId}`;
		byPair.set(key, [...(byPair.get(key) ?? []), r]);
	}
	return [...byPair.values()].map((records) => {
		// The record in force today decides; else the one that reaches furthest.
		const latest = records.find((r) => covers(r, day)) ?? records[0]!;
		const qualified = qualifiedOn(records, day);
		return {
			...latest,
			records,
			qualified,
			lapsesSoon: qualified && latest.expiresOn <= soon
		};
	});
}

export async function recordQualification(
	by: Recorder,
	input: Qualification,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner', 'quality'], 'record training');
	// Nobody records their own training: it would let them qualify themselves to sign (AC4).
	if (by.kind === 'person' && by.id === input.accountId)
		await refuse(
			by,
			'You cannot record your own training: someone else must.',
			{ what: 'record own training' },
			{ type: 'account', id: input.accountId }
		);
	await notInFuture(input.trainedOn, 'trainedOn', 'training date');
	await db().transaction(async (tx) => {
		const [person] = await tx
			.select({ id: accounts.id, roles: accounts.roles, active: accounts.active })
			.from(accounts)
			.where(eq(accounts.id, input.accountId));
		if (!person || !person.active) throw new RecordError('Choose an active person.', 'accountId');
		if (!person.roles.includes('technician') || person.roles.includes('administrator'))
			throw new RecordError(
				'Only technicians perform and verify steps: choose a person with the Technician role.',
				'accountId'
			);
		const [procedure] = await tx
			.select({ id: procedures.id })
			.from(procedures)
			.where(eq(procedures.id, input.procedureId));
		if (!procedure) throw new RecordError('Choose a procedure.', 'procedureId');
		const rec = await appendRecordEvent(tx, by, {
			action: 'qualification.record',
			entityType: 'account',
			entityId: input.accountId,
			newValues: { ...input },
			clientAddress
		});
		await tx.insert(qualifications).values({ id: randomUUID(), ...input, ...rec });
	});
}

/**
 * Withdraws a training record with a reason (entered by mistake, or competence in doubt): from
 * today at the site it no longer qualifies; what was signed before stays as it was. The record
 * stays visible, marked withdrawn.
 */
export async function withdrawQualification(
	by: Recorder,
	qualificationId: string,
	reason: string,
	clientAddress: string | null = null
) {
	await mustHold(by, ['planner', 'quality'], 'withdraw training records');
	needReason(reason);
	const site = await currentSite();
	const today = siteToday(site!.timeZone);
	try {
		await db().transaction(async (tx) => {
			const [record] = await tx
				.select({ accountId: qualifications.accountId, procedureId: qualifications.procedureId })
				.from(qualifications)
				.where(eq(qualifications.id, qualificationId));
			if (!record) throw new RecordError('No such training record.', undefined, 404);
			const rec = await appendRecordEvent(tx, by, {
				action: 'qualification.withdraw',
				entityType: 'account',
				entityId: record.accountId,
				newValues: { qualificationId, procedureId: record.procedureId, effectiveOn: today },
				reason,
				clientAddress
			});
			await tx
				.insert(qualificationWithdrawals)
				.values({ id: randomUUID(), qualificationId, effectiveOn: today, reason, ...rec });
		});
	} catch (e) {
		if (isUniqueViolation(e))
			throw new RecordError('This training record is already withdrawn.', 'reason', 409);
		throw e;
	}
}
