import { and, eq, inArray, isNull, sql } from 'drizzle-orm';
import { env } from '$env/dynamic/private';
import type { Role } from '$lib/roles';
import type { Transaction } from './db/index';
import { accounts } from './db/schema/index';
import { enqueue, type MailMessage } from './outbox';
import { formatInZone } from '$lib/time';
import { qualifiedAmong } from './qualifications';

/**
 * The e-mails of the workflow (7/10), each an outbox row written in the transaction of the event
 * that causes it (sent after commit, retried until the mail server takes it). One message per
 * person, in text and HTML, with a link to the item. Who is told follows the rules of the work:
 * verification goes to the qualified people who may verify (not the performer), release and
 * deviations to Quality, a returned record to the person who did the work, a lockout to the
 * Administrators.
 */

type Person = { id: string; name: string; email: string };

export const appOrigin = () => (env.ORIGIN || 'http://127.0.0.1:3000').replace(/\/$/, '');

const escapeHtml = (s: string) =>
	s.replace(
		/[&<>"']/g,
		(c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!
	);

/** One message: greeting, what happened, the link, why this person receives it. */
export function composeMail(
	to: Person,
	m: { subject: string; lines: string[]; link: string; linkText: string; why: string }
): MailMessage {
	const text = [
		`Hello ${to.name},`,
		'',
		...m.lines,
		'',
		`${m.linkText}: ${m.link}`,
		'',
		m.why,
		'— Countersign'
	].join('\n');
	const html = `<!doctype html><html><body style="font-family:sans-serif;color:#1f2933">
<p>Hello ${escapeHtml(to.name)},</p>
${m.lines.map((l) => `<p>${escapeHtml(l)}</p>`).join('\n')}
<p><a href="${escapeHtml(m.link)}">${escapeHtml(m.linkText)}</a></p>
<p style="color:#52606d;font-size:90%">${escapeHtml(m.why)}<br>— Countersign</p>
</body></html>`;
	return { to: to.email, accountId: to.id, subject: m.subject, text, html };
}

/** Active, unlocked accounts holding one of the roles. */
async function holders(tx: Transaction, roles: Role[]): Promise<Person[]> {
	return tx
		.select({ id: accounts.id, name: accounts.fullName, email: accounts.email })
		.from(accounts)
		.where(
			and(
				eq(accounts.active, true),
				isNull(accounts.lockedAt),
				sql`${accounts.roles} && ${sql.raw(`array[${roles.map((r) => `'${r}'`).join(',')}]::text[]`)}`
			)
		)
		.orderBy(accounts.username);
}

async function send(
	tx: Transaction,
	people: Person[],
	causeSeq: number | null,
	mail: (p: Person) => MailMessage
) {
	for (const p of people)
		if (p.email) await enqueue(tx, { kind: 'mail', payload: mail(p) }, causeSeq);
	return people.length;
}

export type WorkRef = {
	id: string;
	number: string;
	equipmentTag: string;
	procedureId: string;
	procedureCode: string;
};

const workLink = (w: WorkRef, stepKey?: string) =>
	`${appOrigin()}/work/${w.id}${stepKey ? `/steps/${stepKey}` : ''}`;

/** A step signed Performed that needs a second person: to every technician qualified on its procedure today, except those who had a hand in the step. */
export async function notifyVerificationWaiting(
	tx: Transaction,
	w: WorkRef,
	step: { key: string; position: number; title: string },
	performerName: string,
	exclude: string[],
	day: string,
	causeSeq: number
) {
	const technicians = (await holders(tx, ['technician'])).filter((p) => !exclude.includes(p.id));
	if (!technicians.length) return 0;
	const ids = await qualifiedAmong(
		tx,
		technicians.map((t) => t.id),
		w.procedureId,
		day
	);
	const qualified = technicians.filter((t) => ids.includes(t.id));
	return send(tx, qualified, causeSeq, (p) =>
		composeMail(p, {
			subject: `Step ${step.position} of ${w.number} (${w.equipmentTag}) waits for your verification`,
			lines: [
				`Step ${step.position}, “${step.title}”, of work order ${w.number} on ${w.equipmentTag} (${w.procedureCode}) was signed Performed by ${performerName} and needs a second person’s verification.`
			],
			link: workLink(w, step.key),
			linkText: 'Open the step',
			why: `You receive this because you are qualified on ${w.procedureCode}. Only someone who did not perform or enter the step can verify it.`
		})
	);
}

/** A work order signed Executed: to Quality, except anyone who took part in the work. */
export async function notifyReleaseWaiting(
	tx: Transaction,
	w: WorkRef,
	executedBy: string,
	exclude: string[],
	causeSeq: number
) {
	const quality = (await holders(tx, ['quality'])).filter((p) => !exclude.includes(p.id));
	return send(tx, quality, causeSeq, (p) =>
		composeMail(p, {
			subject: `${w.number} (${w.equipmentTag}) waits for QA release`,
			lines: [
				`Work order ${w.number} on ${w.equipmentTag} (${w.procedureCode}) was signed Executed by ${executedBy}. The equipment is Awaiting release until Quality reviews the record and releases it.`
			],
			link: workLink(w),
			linkText: 'Open the record',
			why: 'You receive this because you hold the Quality role.'
		})
	);
}

/** A deviation raised: to Quality, who disposition it before release (not those who took part: they may not). */
export async function notifyDeviation(
	tx: Transaction,
	w: WorkRef,
	deviation: { number: string; stepKey: string; stepPosition: number; description: string },
	raisedBy: string,
	exclude: string[],
	causeSeq: number
) {
	const quality = (await holders(tx, ['quality'])).filter((p) => !exclude.includes(p.id));
	return send(tx, quality, causeSeq, (p) =>
		composeMail(p, {
			subject: `Deviation ${deviation.number} on ${w.number} (${w.equipmentTag}) needs a disposition`,
			lines: [
				`${raisedBy} recorded a value outside its limits in step ${deviation.stepPosition} of work order ${w.number} on ${w.equipmentTag}: deviation ${deviation.number}.`,
				`Description: ${deviation.description}`
			],
			link: workLink(w),
			linkText: 'Open the record',
			why: 'You receive this because you hold the Quality role; the record cannot be released until the deviation is dispositioned.'
		})
	);
}

/** A step or the whole record returned for correction: to the people who did the work. */
export async function notifyReturned(
	tx: Transaction,
	w: WorkRef,
	what: { stepKey?: string; stepPosition?: number; reason: string; by: string },
	to: string[],
	causeSeq: number
) {
	if (!to.length) return 0;
	const people = await tx
		.select({ id: accounts.id, name: accounts.fullName, email: accounts.email })
		.from(accounts)
		.where(and(inArray(accounts.id, to), eq(accounts.active, true)));
	const subject = what.stepKey
		? `Step ${what.stepPosition} of ${w.number} (${w.equipmentTag}) was returned to you`
		: `${w.number} (${w.equipmentTag}) was returned for correction`;
	return send(tx, people, causeSeq, (p) =>
		composeMail(p, {
			subject,
			lines: [
				what.stepKey
					? `${what.by} returned step ${what.stepPosition} of work order ${w.number} on ${w.equipmentTag} instead of verifying it.`
					: `${what.by} (Quality) returned work order ${w.number} on ${w.equipmentTag} for correction; it is In progress again and the equipment Out of service.`,
				`Reason: ${what.reason}`
			],
			link: workLink(w, what.stepKey),
			linkText: what.stepKey ? 'Open the step' : 'Open the record',
			why: 'You receive this because you did this work.'
		})
	);
}

/** An account locked after failed passwords (ES7): to the Administrators. */
export async function notifyLocked(
	tx: Transaction,
	account: { id: string; username: string },
	failures: number,
	causeSeq: number
) {
	const admins = await holders(tx, ['administrator']);
	return send(tx, admins, causeSeq, (p) =>
		composeMail(p, {
			subject: `Account ${account.username} is locked after failed passwords`,
			lines: [
				`The account ${account.username} was locked after ${failures} consecutive failed passwords (at sign-in or at an electronic signature).`,
				'If it was not its owner, treat it as a security event. An Administrator unlocks the account from its page after checking with the person.'
			],
			link: `${appOrigin()}/people/${account.id}`,
			linkText: 'Open the account',
			why: 'You receive this because you hold the Administrator role.'
		})
	);
}

/** The audit trail failed its verification (8/10): to Quality and the Administrators. */
export async function notifyVerificationFailed(
	tx: Transaction,
	result: { events: number; firstBadSeq: number | null; problem: string | null },
	checkedBy: string,
	causeSeq: number
) {
	const people = await holders(tx, ['quality', 'administrator']);
	return send(tx, people, causeSeq, (p) =>
		composeMail(p, {
			subject: `The audit trail failed its verification at event ${result.firstBadSeq}`,
			lines: [
				`${checkedBy} ran the verification of the audit trail. It failed at event ${result.firstBadSeq}: ${result.problem}.`,
				'Treat it as a data-integrity incident under your site procedures: keep the database as it is, and compare with the latest export and checkpoints.'
			],
			link: `${appOrigin()}/audit?after=${(result.firstBadSeq ?? 0) + 1}`,
			linkText: 'Open the event in the audit trail',
			why: 'You receive this because you hold the Quality or Administrator role.'
		})
	);
}

/** A follow-up made after the first SIP cycle following a release (9/10): to the Planners, who assign it. */
export async function notifyFollowUp(
	tx: Transaction,
	w: { id: string; number: string; tag: string; procedureCode: string },
	of: { number: string; procedureCode: string },
	cycle: { startedAt: Date; dueBy: Date; hours: number },
	timeZone: string,
	causeSeq: number
) {
	const planners = await holders(tx, ['planner']);
	return send(tx, planners, causeSeq, (p) =>
		composeMail(p, {
			subject: `Follow-up ${w.number} on ${w.tag} is due by ${formatInZone(cycle.dueBy, timeZone)}`,
			lines: [
				`The first SIP cycle after the release of ${of.number} (${of.procedureCode}) on ${w.tag} started ${formatInZone(cycle.startedAt, timeZone)}. ${of.procedureCode} asks for ${w.procedureCode} after it: work order ${w.number} is made and waits to be assigned.`,
				`It is due within ${cycle.hours} h of the cycle's end, by ${formatInZone(cycle.dueBy, timeZone)}.`
			],
			link: `${appOrigin()}/work/${w.id}`,
			linkText: 'Open the work order',
			why: 'You receive this because you hold the Planner role.'
		})
	);
}

/** A SIP cycle that was not saturated steam (9/10): to Quality, who disposition the deviation. */
export async function notifySipDeviation(
	tx: Transaction,
	d: { id: string; number: string; tag: string; description: string },
	causeSeq: number
) {
	const quality = await holders(tx, ['quality']);
	return send(tx, quality, causeSeq, (p) =>
		composeMail(p, {
			subject: `Deviation ${d.number}: a SIP cycle on ${d.tag} was not saturated steam`,
			lines: [d.description],
			link: `${appOrigin()}/deviations/${d.id}`,
			linkText: 'Open the deviation',
			why: 'You receive this because you hold the Quality role; the deviation needs a disposition.'
		})
	);
}

export type DigestItem = { title: string; detail: string };

/** The Planners' daily digest (9/10 item 4): one message per Planner per day, every item in it. */
export async function notifyPmDigest(
	tx: Transaction,
	day: string,
	overdue: DigestItem[],
	dueSoon: DigestItem[],
	causeSeq: number
) {
	const planners = await holders(tx, ['planner']);
	const list = (items: DigestItem[]) => items.map((i) => `• ${i.title} — ${i.detail}`);
	return send(tx, planners, causeSeq, (p) =>
		composeMail(p, {
			subject: `Preventive maintenance on ${day}: ${overdue.length} overdue, ${dueSoon.length} due soon`,
			lines: [
				...(overdue.length ? [`Overdue (${overdue.length}):`, ...list(overdue)] : []),
				...(dueSoon.length ? [`Due soon (${dueSoon.length}):`, ...list(dueSoon)] : [])
			],
			link: `${appOrigin()}/pm`,
			linkText: 'Open PM schedules',
			why: 'You receive this once a day while work is due soon or overdue, because you hold the Planner role.'
		})
	);
}
