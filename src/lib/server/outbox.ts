import { and, asc, eq, inArray, isNull, lte, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import type { Transporter } from 'nodemailer';
import { db, type Transaction } from './db/index';
import { outbox } from './db/schema/index';
import { log } from './log';
import { mailer, mailFrom } from './mail';

/**
 * The outbox (7/10): what must happen after a transaction commits — e-mails, the released record
 * — written in that transaction, done by a worker afterwards, retried with back-off until it
 * succeeds. The work itself never blocks or fails the transaction that caused it.
 */

export type MailMessage = {
	to: string;
	/** The account the message is for (who was told what is part of the record of the outbox). */
	accountId: string | null;
	subject: string;
	text: string;
	html: string;
};

export type OutboxJob =
	| { kind: 'mail'; payload: MailMessage }
	| { kind: 'released_record'; payload: { workOrderId: string } };

/** Adds a job in the caller's transaction: it exists exactly when what caused it does. */
export async function enqueue(tx: Transaction, job: OutboxJob, causeSeq: number | null = null) {
	const id = randomUUID();
	await tx.insert(outbox).values({ id, kind: job.kind, payload: job.payload, causeSeq });
	return id;
}

/** The wait before attempt n + 1 after n failures: 5 s, 10 s, 20 s … at most 10 minutes. */
export function backoffSeconds(failures: number) {
	return Math.min(5 * 2 ** Math.max(0, failures - 1), 600);
}

type Handlers = {
	released_record?: (payload: { workOrderId: string }) => Promise<void>;
};
/** Set by the module that renders the released record (kept apart so the outbox needs no PDF code). */
const handlers: Handlers = {};
export function handleReleasedRecords(run: NonNullable<Handlers['released_record']>) {
	handlers.released_record = run;
}

export type DrainOptions = {
	/** Only these rows (tests). */
	ids?: string[];
	/** Only this kind. */
	kind?: OutboxJob['kind'];
	/** Take rows due by this time rather than now (tests, to skip a back-off). */
	dueBy?: Date;
	/** Another mail transport (tests). */
	transport?: Transporter;
	/** At most this many rows in one drain. */
	limit?: number;
};

export type DrainResult = { done: number; failed: number; errors: string[] };

/**
 * Does the due jobs, one row per transaction: the row is locked (SKIP LOCKED: another worker or
 * server takes the next one), the work done, the row marked done — or its attempt counted with
 * the error and the next attempt put off. A job is done at least once; the released record
 * handler is idempotent (one per work order, enforced by the database), a mail may in a crash
 * between sending and marking be sent twice, never lost.
 */
export async function drainOutbox(o: DrainOptions = {}): Promise<DrainResult> {
	const result: DrainResult = { done: 0, failed: 0, errors: [] };
	const limit = o.limit ?? 50;
	const dueBy = o.dueBy ? sql`${o.dueBy.toISOString()}::timestamptz` : sql`now()`;
	for (let i = 0; i < limit; i++) {
		const outcome = await db().transaction(async (tx) => {
			const [row] = await tx
				.select()
				.from(outbox)
				.where(
					and(
						isNull(outbox.doneAt),
						lte(outbox.nextAttemptAt, dueBy),
						o.ids ? inArray(outbox.id, o.ids) : undefined,
						o.kind ? eq(outbox.kind, o.kind) : undefined
					)
				)
				.orderBy(asc(outbox.nextAttemptAt), asc(outbox.createdAt))
				.limit(1)
				.for('update', { skipLocked: true });
			if (!row) return null;
			try {
				await run({ kind: row.kind, payload: row.payload } as OutboxJob, o.transport);
				await tx
					.update(outbox)
					.set({ doneAt: sql`now()`, attempts: row.attempts + 1, lastError: null })
					.where(eq(outbox.id, row.id));
				return { ok: true as const };
			} catch (e) {
				const message = errorText(e);
				const failures = row.attempts + 1;
				await tx
					.update(outbox)
					.set({
						attempts: failures,
						lastError: message,
						nextAttemptAt: sql`now() + ${backoffSeconds(failures)} * interval '1 second'`
					})
					.where(eq(outbox.id, row.id));
				log.warn('outbox job failed; it will be tried again', {
					outboxId: row.id,
					kind: row.kind,
					attempts: failures,
					retryInSeconds: backoffSeconds(failures),
					error: message
				});
				return { ok: false as const, message };
			}
		});
		if (!outcome) break;
		if (outcome.ok) result.done++;
		else {
			result.failed++;
			result.errors.push(outcome.message);
		}
	}
	return result;
}

async function run(job: OutboxJob, transport?: Transporter) {
	if (job.kind === 'mail') {
		const m = job.payload;
		await (transport ?? mailer()).sendMail({
			from: mailFrom(),
			to: m.to,
			subject: m.subject,
			text: m.text,
			html: m.html
		});
		return;
	}
	if (job.kind === 'released_record') {
		if (!handlers.released_record) throw new Error('the released record handler is not loaded');
		await handlers.released_record(job.payload);
		return;
	}
	throw new Error(`unknown outbox kind ${(job as { kind: string }).kind}`);
}

/** A short, secret-free description of what went wrong (SMTP URLs may carry a password). */
function errorText(e: unknown) {
	const err = e as { code?: string; message?: string };
	const text = `${err.code ? `${err.code}: ` : ''}${err.message ?? String(e)}`;
	return text.replace(/\/\/[^@\s/]*@/g, '//…@').slice(0, 500);
}

// ── The worker inside the server ─────────────────────────────────────────────

let timer: ReturnType<typeof setInterval> | undefined;
let running: Promise<unknown> | undefined;
let again = false;

/** Drains now (or right after the drain in progress). Called after a commit that wrote jobs. */
export function kickOutbox() {
	if (!timer) return; // no worker in this process (tests drain by hand)
	if (running) {
		again = true;
		return;
	}
	running = drainOutbox()
		.catch((e) => log.error('outbox drain failed', { error: errorText(e) }))
		.finally(() => {
			running = undefined;
			if (again) {
				again = false;
				kickOutbox();
			}
		});
}

/** Starts the worker: a drain every `everyMs`, and one after each kick. */
export function startOutboxWorker(everyMs = 5000) {
	if (timer) return;
	timer = setInterval(kickOutbox, everyMs);
	timer.unref();
	kickOutbox();
}

export async function stopOutboxWorker() {
	if (timer) clearInterval(timer);
	timer = undefined;
	await running;
}
