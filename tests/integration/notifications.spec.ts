import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { simpleParser } from 'mailparser';
import nodemailer from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { leafHash, verifyInclusion } from '../../scripts/verify-export.mjs';
import { addDays } from '../../src/lib/fitness';
import { inclusionOf } from '../../src/lib/server/audit/checkpoints';
import { verifyChain } from '../../src/lib/server/audit/verify';
import { attemptSignIn } from '../../src/lib/server/auth/sign-in';
import type { User } from '../../src/lib/server/auth/guard';
import { db } from '../../src/lib/server/db/index';
import { DEMO_PASSWORD } from '../../src/lib/server/db/seed';
import * as equipment from '../../src/lib/server/equipment';
import { appOrigin } from '../../src/lib/server/notify';
import { backoffSeconds, drainOutbox, enqueue } from '../../src/lib/server/outbox';
import { recordPdf, releasedPdf, storeReleasedRecord } from '../../src/lib/server/pdf/index';
import * as procedures from '../../src/lib/server/procedures';
import { readRecordHash, verifyRecordHash } from '../../src/lib/server/record-verification';
import { personOf } from '../../src/lib/server/records';
import { getBytes } from '../../src/lib/server/storage';
import * as work from '../../src/lib/server/work-orders';
import { setEnv, type appDatabase } from './helpers/app-database';
import { stepActions, workDatabase } from './helpers/work';

// Notifications through the outbox, the released record, and the verification of a print
// (issue 7/10; REQUIREMENTS ES7 — lockout told to the Administrators; RP1, RP3 — the released
// true copy stored with its hash; AT1 — outbox and prints cannot be rewritten). Real PostgreSQL,
// the S3 fake of the test run, and an SMTP fake (fakes/smtp.js) this file stops and restarts.
let t: Awaited<ReturnType<typeof appDatabase>>;
let today: string;
const people: Record<string, User> = {};
const ip = '198.51.100.70';
const pw = DEMO_PASSWORD;
let goodValues: () => Promise<Record<string, Record<string, string>>>;

beforeAll(async () => {
	const w = await workDatabase(['MP-DV-01']);
	({ t, today, goodValues } = w);
	Object.assign(people, w.people);
}, 120_000);
afterAll(async () => {
	await stopSmtp();
	await t?.drop();
});

const { view, save, perform, verify } = stepActions(people, ip);

type Mail = { to: string; accountId: string | null; subject: string; text: string; html: string };
/** The mail rows written for a work order (by its number in the subject), oldest first. */
async function mailsAbout(number: string) {
	const rows = await t.ownerSql`select id, payload, cause_seq from outbox
		where kind = 'mail' and payload->>'subject' like ${'%' + number + '%'} order by created_at, id`;
	return rows.map((r) => ({
		id: r.id as string,
		causeSeq: Number(r.cause_seq),
		...(r.payload as Mail)
	}));
}
const emailOf = (u: string) => people[u]!.email;

// ── The SMTP fake, as a process of its own ───────────────────────────────────
let smtp: ChildProcess | undefined;
let smtpPort = 0;
const mailFolder = mkdtempSync(join(tmpdir(), 'countersign-mail-'));
async function freePort() {
	const s = createServer();
	await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
	const port = (s.address() as { port: number }).port;
	await new Promise((r) => s.close(r));
	return port;
}
async function startSmtp() {
	smtp = spawn(
		process.execPath,
		['fakes/smtp.js', '--port', String(smtpPort), '--directory', mailFolder],
		{
			stdio: ['ignore', 'pipe', 'pipe']
		}
	);
	await new Promise<void>((resolve, reject) => {
		smtp!.stdout!.on('data', (b: Buffer) => b.toString().includes('listening') && resolve());
		smtp!.once('exit', (code) => reject(new Error(`the SMTP fake exited (${code})`)));
	});
}
async function stopSmtp() {
	if (!smtp || smtp.exitCode !== null) return;
	const exited = new Promise((r) => smtp!.once('exit', r));
	smtp.kill('SIGTERM');
	await exited;
	smtp = undefined;
}
const transport = () =>
	nodemailer.createTransport(`smtp://127.0.0.1:${smtpPort}`, {
		connectionTimeout: 2000,
		greetingTimeout: 2000,
		socketTimeout: 4000
	});
/** The messages the fake kept, parsed (mailparser), with the envelope recipients it noted. */
async function delivered() {
	return Promise.all(
		readdirSync(mailFolder)
			.filter((f) => f.endsWith('.eml'))
			.sort()
			.map(async (f) => {
				const raw = readFileSync(join(mailFolder, f));
				const rcpt = /^X-Fake-Rcpt-To: (.*)$/m.exec(raw.toString('utf8'))![1]!.trim();
				const parsed = await simpleParser(raw);
				return {
					rcpt,
					subject: parsed.subject ?? '',
					text: parsed.text ?? '',
					html: String(parsed.html)
				};
			})
	);
}

describe('the e-mails of the diaphragm job (outbox rows in the transaction of their event)', () => {
	let id: string;
	let number: string;
	const link = (stepKey?: string) =>
		`${appOrigin()}/work/${id}${stepKey ? `/steps/${stepKey}` : ''}`;

	it('a step signed Performed that needs verification: the qualified technicians other than the performer', async () => {
		const created = await work.createWorkOrder(personOf(people.planner!), {
			kind: 'corrective',
			equipmentId: (await equipment.findByTag('XV-3104'))!,
			procedureId: (await procedures.findProcedureByCode('MP-DV-01'))!,
			dueOn: addDays(today, 3),
			priority: 'high',
			assignees: [people.tech1!.id],
			notes: 'Leak at the bonnet.'
		});
		id = created.id;
		number = created.number;
		await work.startWorkOrder(people.tech1!, id, (await view(id)).revision, ip);
		const values = await goodValues();
		await save('tech1', id, 'isolate', values.isolate!);
		expect(await mailsAbout(number)).toEqual([]); // a save needs nobody
		await perform('tech1', id, 'isolate');
		const mails = await mailsAbout(number);
		// tech2 and techqa are trained on MP-DV-01; tech3 is trained on nothing; tech1 performed it.
		expect(mails.map((m) => m.to).sort()).toEqual([emailOf('tech2'), emailOf('techqa')].sort());
		for (const m of mails) {
			expect(m.subject).toBe(`Step 1 of ${number} (XV-3104) waits for your verification`);
			expect(m.text).toContain(`Open the step: ${link('isolate')}`);
			expect(m.text).toContain(people.tech1!.name);
			expect(m.html).toContain(`<a href="${link('isolate')}">`);
		}
		// The row names the audit event that caused it: the step's Performed signoff.
		const [event] =
			await t.ownerSql`select action from audit_event where seq = ${mails[0]!.causeSeq}`;
		expect(event!.action).toBe('work_order.step_performed');
	});

	it('a refused signature writes no e-mail (the outbox row lives and dies with its event)', async () => {
		const before = (await mailsAbout(number)).length;
		await expect(perform('tech1', id, 'as-found', 'not-the-password')).rejects.toThrow();
		expect(await mailsAbout(number)).toHaveLength(before);
		// A transaction that fails after enqueueing leaves no row either.
		const marker = `rolled back ${randomBytes(4).toString('hex')}`;
		await expect(
			db().transaction(async (tx) => {
				await enqueue(tx, {
					kind: 'mail',
					payload: { to: 'x@ostmere.example', accountId: null, subject: marker, text: '', html: '' }
				});
				throw new Error('the event failed');
			})
		).rejects.toThrow('the event failed');
		const [n] =
			await t.ownerSql`select count(*)::int as n from outbox where payload->>'subject' = ${marker}`;
		expect(n!.n).toBe(0);
	});

	it('a step returned by the verifier: its performer, with the reason and the step link', async () => {
		const seen = (await view(id)).steps.find((s) => s.step.key === 'isolate')!.status.revision;
		await work.returnStep(
			people.tech2!,
			id,
			'isolate',
			'Write the LOTO permit number in full.',
			seen,
			ip
		);
		const returned = (await mailsAbout(number)).filter((m) => m.subject.includes('returned'));
		expect(returned.map((m) => m.to)).toEqual([emailOf('tech1')]);
		expect(returned[0]!.subject).toBe(`Step 1 of ${number} (XV-3104) was returned to you`);
		expect(returned[0]!.text).toContain('Reason: Write the LOTO permit number in full.');
		expect(returned[0]!.text).toContain(link('isolate'));
		expect(returned[0]!.text).toContain(people.tech2!.name);
	});

	it('a deviation: Quality (not a Quality person who took part), with the description', async () => {
		const values = await goodValues();
		await save(
			'tech1',
			id,
			'isolate',
			{ ...values.isolate!, 'loto-permit': 'LP-0042-A' },
			{
				reasons: { 'loto-permit': 'Returned by the verifier: permit number in full' }
			}
		);
		await perform('tech1', id, 'isolate');
		await verify('tech2', id, 'isolate');
		for (const key of Object.keys(values).slice(1)) {
			if (key === 'flow-check')
				await save(
					'tech1',
					id,
					key,
					{ ...values[key]!, flow: '35.0' },
					{
						deviations: { flow: 'Flow 35 L/min below the 40 L/min minimum.' }
					}
				);
			else await save('tech1', id, key, values[key]!);
			await perform('tech1', id, key);
			if ((await view(id)).steps.find((s) => s.step.key === key)!.step.verificationRequired)
				await verify(key === 'new-diaphragm' ? 'techqa' : 'tech2', id, key);
		}
		const dev = (await mailsAbout(number)).filter((m) => m.subject.startsWith('Deviation'));
		// techqa verified step 7 before the flow check: they took part, so only Quentin is told.
		expect(dev.map((m) => m.to)).toEqual([emailOf('quality')]);
		expect(dev[0]!.subject).toMatch(
			new RegExp(`^Deviation DEV-\\d{4}-\\d{4} on ${number} \\(XV-3104\\) needs a disposition$`)
		);
		expect(dev[0]!.text).toContain('Description: Flow 35 L/min below the 40 L/min minimum.');
		expect(dev[0]!.text).toContain(link());
	});

	it('signed Executed: Quality who took no part, with the record link', async () => {
		await work.completeExecution(people.tech1!, id, pw, (await view(id)).revision, ip);
		const waiting = (await mailsAbout(number)).filter((m) =>
			m.subject.includes('waits for QA release')
		);
		expect(waiting.map((m) => m.to)).toEqual([emailOf('quality')]);
		expect(waiting[0]!.text).toContain(`Open the record: ${link()}`);
	});

	it('returned by Quality: the technician who signed it Executed', async () => {
		await work.returnWorkOrder(
			people.quality!,
			id,
			'Attach the flow printout.',
			pw,
			(await view(id)).revision,
			ip
		);
		const back = (await mailsAbout(number)).filter((m) =>
			m.subject.endsWith('was returned for correction')
		);
		expect(back.map((m) => m.to)).toEqual([emailOf('tech1')]);
		expect(back[0]!.text).toContain('Reason: Attach the flow printout.');
	});

	it('released: the released-record job is written with the release, and no e-mail', async () => {
		await work.completeExecution(people.tech1!, id, pw, (await view(id)).revision, ip);
		let v = await view(id);
		await work.reviewTrail(people.quality!, id, pw, v.revision, ip);
		v = await view(id);
		await work.dispositionDeviation(
			people.quality!,
			id,
			v.deviations[0]!.id,
			'accepted',
			'Low line pressure; no impact.',
			pw,
			(await view(id)).revision,
			ip
		);
		await work.releaseWorkOrder(people.quality!, id, pw, (await view(id)).revision, ip);
		const jobs =
			await t.ownerSql`select o.cause_seq, e.action from outbox o join audit_event e on e.seq = o.cause_seq
			where o.kind = 'released_record' and o.payload->>'workOrderId' = ${id}`;
		expect(jobs.map((j) => j.action)).toEqual(['work_order.release']);
		expect((await view(id)).released).toBeNull(); // nothing stored until the job runs
	});

	it('sending: the SMTP fake down, the attempt counted and put off; up again, every message arrives', async () => {
		smtpPort = await freePort();
		const mine = (await mailsAbout(number)).map((m) => m.id);
		const first = await drainOutbox({ ids: mine, transport: transport() });
		expect(first.done).toBe(0);
		expect(first.failed).toBe(mine.length);
		expect(first.errors[0]).toMatch(/ECONNREFUSED/);
		const rows = await t.ownerSql`select attempts, last_error, done_at,
			extract(epoch from next_attempt_at - now())::float8 as wait from outbox where id in ${t.ownerSql(mine)}`;
		for (const r of rows) {
			expect(r.attempts).toBe(1);
			expect(r.done_at).toBeNull();
			expect(r.wait).toBeGreaterThan(backoffSeconds(1) - 2);
		}
		// Not due yet: a drain now takes nothing.
		expect((await drainOutbox({ ids: mine, transport: transport() })).done).toBe(0);

		await startSmtp();
		const later = new Date(Date.now() + 60_000);
		const second = await drainOutbox({ ids: mine, transport: transport(), dueBy: later });
		expect(second).toMatchObject({ done: mine.length, failed: 0 });
		const got = await delivered();
		expect(got).toHaveLength(mine.length);
		const expected = await mailsAbout(number);
		for (const m of expected) {
			const d = got.find((x) => x.subject === m.subject && x.rcpt === m.to);
			expect(d, `${m.subject} → ${m.to}`).toBeDefined();
			expect(d!.text.trim()).toBe(m.text.trim());
			expect(d!.html).toContain('href="' + appOrigin());
		}
		const done =
			await t.ownerSql`select count(*)::int as n from outbox where id in ${t.ownerSql(mine)} and done_at is not null and attempts = 2`;
		expect(done[0]!.n).toBe(mine.length);

		// Stopped again: the next message waits; restarted: it arrives; nothing is sent twice.
		await stopSmtp();
		const id2 = await db().transaction((tx) =>
			enqueue(tx, {
				kind: 'mail',
				payload: {
					to: emailOf('tech2'),
					accountId: people.tech2!.id,
					subject: `Restart check ${number}`,
					text: 'x',
					html: '<p>x</p>'
				}
			})
		);
		expect((await drainOutbox({ ids: [id2], transport: transport() })).failed).toBe(1);
		await startSmtp();
		expect((await drainOutbox({ ids: [id2], transport: transport(), dueBy: later })).done).toBe(1);
		expect(
			(await drainOutbox({ ids: [...mine, id2], transport: transport(), dueBy: later })).done
		).toBe(0);
		expect(await delivered()).toHaveLength(mine.length + 1);
	});

	it('the back-off doubles from 5 s and stops growing at 10 minutes', () => {
		expect([1, 2, 3, 4, 5, 6, 7, 8, 9, 20].map(backoffSeconds)).toEqual([
			5, 10, 20, 40, 80, 160, 320, 600, 600, 600
		]);
	});

	it('the released record: rendered once, stored under its SHA-256, its hash audited; later prints are copies (RP1, RP3)', async () => {
		const [job] =
			await t.ownerSql`select id from outbox where kind = 'released_record' and payload->>'workOrderId' = ${id}`;
		expect(await drainOutbox({ ids: [job!.id] })).toMatchObject({ done: 1, failed: 0 });
		const v = await view(id);
		expect(v.released).not.toBeNull();
		const stored = (await releasedPdf(id))!;
		expect(stored.intact).toBe(true);
		const sha = createHash('sha256').update(stored.bytes!).digest('hex');
		expect(sha).toBe(stored.row.sha256);
		expect(
			Buffer.from((await getBytes(`records/${sha}.pdf`))!).equals(Buffer.from(stored.bytes!))
		).toBe(true);
		const [event] = await t.ownerSql`select actor_kind, actor_name, new_values from audit_event
			where action = 'work_order.record_stored' and entity_id = ${id}`;
		expect(event!.actor_kind).toBe('system');
		expect(event!.new_values).toMatchObject({
			sha256: sha,
			size: stored.bytes!.length,
			recordHash: stored.row.recordHash
		});
		// The job again (a retry, or a second server): still one.
		await storeReleasedRecord({ workOrderId: id });
		const [n] =
			await t.ownerSql`select count(*)::int as n from released_records where work_order_id = ${id}`;
		expect(n!.n).toBe(1);

		const dir = mkdtempSync(join(tmpdir(), 'countersign-released-'));
		const text = (bytes: Uint8Array, name: string) => {
			writeFileSync(join(dir, name), bytes);
			return execFileSync('pdftotext', ['-enc', 'UTF-8', join(dir, name), '-'], {
				encoding: 'utf8'
			});
		};
		const original = text(stored.bytes!, 'released.pdf');
		expect(original).not.toMatch(/COPY|copy generated/);
		// The release event's inclusion proof against the checkpoint made for it (8/10), printed and valid.
		expect(stored.row.checkpointSize).toBeGreaterThan(0);
		const releaseSeq = v.transitions.findLast((x) => x.kind === 'released')!.auditSeq;
		const proof = (await inclusionOf(releaseSeq, stored.row.checkpointSize!))!;
		const hexBytes = (h: string) => new Uint8Array(Buffer.from(h, 'hex'));
		expect(
			verifyInclusion(
				releaseSeq - 1,
				proof.treeSize,
				leafHash(hexBytes(proof.eventHash)),
				proof.path.map(hexBytes),
				hexBytes(proof.rootHash)
			)
		).toBe(true);
		const flatText = original.replace(/\s+/g, ' ');
		expect(flatText).toContain(
			`Checkpoint ${proof.treeSize} events, Merkle root ${proof.rootHash}`
		);
		for (const h of proof.path) expect(flatText).toContain(h);
		expect(original).toContain(stored.row.recordHash.slice(0, 16));
		const copy = (await recordPdf(id, { printedBy: people.inspector! }))!;
		expect(copy.printKind).toBe('copy');
		expect(copy.recordHash).toBe(stored.row.recordHash);
		const copyText = text(copy.bytes, 'copy.pdf');
		expect(copyText).toContain('COPY of the released record');
		expect(copyText).toMatch(/copy generated/);
	});

	it('the verification page’s answer: the released hash matches the record, the chain head and the trail', async () => {
		const stored = (await releasedPdf(id))!;
		const r = await verifyRecordHash(stored.row.recordHash);
		if (!r.found) throw new Error('not found');
		expect(r.workOrder).toMatchObject({ id, number, status: 'released' });
		expect(r.matchesCurrent).toBe(true);
		expect(r.trail.ok).toBe(true);
		expect(r.prints.map((p) => p.kind)).toEqual(['released', 'copy']);
		expect(r.prints.every((p) => p.chainMatches)).toBe(true);
		expect(r.prints[1]!.printedByName).toBe(people.inspector!.name);
		expect(r.released?.sha256).toBe(stored.row.sha256);
		expect(await verifyRecordHash(randomBytes(32).toString('hex'))).toMatchObject({ found: false });
	});

	it('a working print of a record that changed afterwards: no longer matches, and what changed is listed', async () => {
		const other = await work.createWorkOrder(personOf(people.planner!), {
			kind: 'corrective',
			equipmentId: (await equipment.findByTag('XV-3104'))!,
			procedureId: (await procedures.findProcedureByCode('MP-DV-01'))!,
			dueOn: addDays(today, 5),
			priority: 'routine',
			assignees: [people.tech1!.id],
			notes: ''
		});
		await work.startWorkOrder(people.tech1!, other.id, (await view(other.id)).revision, ip);
		const print = (await recordPdf(other.id, { printedBy: people.tech1! }))!;
		expect(print.printKind).toBe('working');
		expect(await verifyRecordHash(print.recordHash)).toMatchObject({
			found: true,
			matchesCurrent: true
		});
		await save('tech1', other.id, 'isolate', (await goodValues()).isolate!);
		await perform('tech1', other.id, 'isolate');
		const r = await verifyRecordHash(print.recordHash);
		if (!r.found) throw new Error('not found');
		expect(r.matchesCurrent).toBe(false);
		expect(r.trail.ok).toBe(true);
		expect(r.changesSince.map((c) => c.action)).toEqual(
			expect.arrayContaining(['work_order.entry', 'work_order.step_performed'])
		);
	});

	it('a typed hash: spaces dropped, case folded; wrong characters and lengths get a clear message', () => {
		const h = 'ab'.repeat(32);
		expect(readRecordHash(` ${h.slice(0, 32).toUpperCase()}\n${h.slice(32)} `)).toEqual({
			hash: h
		});
		expect(readRecordHash('')).toEqual({ error: expect.stringMatching(/Enter the record hash/) });
		expect(readRecordHash('xyz')).toEqual({
			error: expect.stringMatching(/0–9 and the letters a–f/)
		});
		expect(readRecordHash(h.slice(1))).toEqual({
			error: expect.stringMatching(/64 characters; this one has 63/)
		});
	});
});

describe('the lockout e-mail (ES7) and the rules of the outbox tables (AT1)', () => {
	it('five wrong passwords at sign-in lock the account and tell every Administrator', async () => {
		setEnv({ AUTH_DELAY_FREE_PER_USERNAME: '100', AUTH_DELAY_FREE_PER_ADDRESS: '100' });
		for (let i = 0; i < 5; i++)
			await attemptSignIn({ username: 'tech3', password: 'wrong-password', clientAddress: ip });
		const rows =
			await t.ownerSql`select payload from outbox where kind = 'mail' and payload->>'subject' = 'Account tech3 is locked after failed passwords'`;
		expect(rows.map((r) => (r.payload as Mail).to)).toEqual([emailOf('admin')]);
		expect((rows[0]!.payload as Mail).text).toContain(`${appOrigin()}/people/${people.tech3!.id}`);
		expect((rows[0]!.payload as Mail).text).toContain('5 consecutive failed passwords');
	});

	it('the app may only record delivery: payloads, deletes and done rows stay as they are', async () => {
		const [row] = await t.appSql`select id from outbox where done_at is not null limit 1`;
		const [open] = await t.appSql`select id from outbox where done_at is null limit 1`;
		await expect(t.appSql`update outbox set payload = '{}' where id = ${open!.id}`).rejects.toThrow(
			/permission denied/
		);
		await expect(t.appSql`delete from outbox where id = ${open!.id}`).rejects.toThrow(
			/permission denied/
		);
		await expect(
			t.appSql`update outbox set last_error = 'x' where id = ${row!.id}`
		).rejects.toThrow(/is done and stays/);
		await expect(
			t.ownerSql`update outbox set payload = '{}' where id = ${open!.id}`
		).rejects.toThrow(/only the delivery/);
		await expect(t.ownerSql`delete from outbox where id = ${open!.id}`).rejects.toThrow(
			/never deleted/
		);
		await expect(t.appSql`update released_records set size = 1`).rejects.toThrow();
		await expect(t.ownerSql`update released_records set size = 1`).rejects.toThrow(/append-only/);
		await expect(t.ownerSql`delete from record_prints`).rejects.toThrow(/append-only/);
	});

	it('the chain verifies after all of it', async () => {
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});
});
