import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { siteToday } from '../../src/lib/fitness';
import * as tokens from '../../src/lib/server/api-tokens';
import type { User } from '../../src/lib/server/auth/guard';
import { verifyChain } from '../../src/lib/server/audit/verify';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { seedDemoSchedules } from '../../src/lib/server/db/demo/schedules';
import { seedDemoWork } from '../../src/lib/server/db/demo/work';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import * as equipment from '../../src/lib/server/equipment';
import { createDueFollowUps, followUpLinks } from '../../src/lib/server/follow-ups';
import { recordPlantUsage, usageReportSchema } from '../../src/lib/server/plant-usage';
import { currentSite } from '../../src/lib/server/plant';
import * as pm from '../../src/lib/server/pm';
import { queuesOf } from '../../src/lib/server/queues';
import * as sip from '../../src/lib/server/sip-deviations';
import { appDatabase, setEnv } from './helpers/app-database';

// Follow-ups, deviations of SIP cycles and the Planners' digest (issue 9/10 items 2–4), on the
// demo data in a real PostgreSQL. The demo's released work order WO-2026-0007 replaced the
// diaphragm of XV-4205 under MP-DV-01, which names MP-DV-02 (the re-tightening check) to follow
// the first steam sterilisation: the retightening after the first SIP is common practice for
// PTFE/elastomer diaphragms (common practice, no source). Saturated steam: IAPWS-IF97 region 4
// (shared/CHECK-VALUES.md) — at 1.2 bar absolute about 104.8 °C, so 121 °C there is not
// saturated steam. REQUIREMENTS ES1, ES4 (the disposition signs), ES8 (segregation), AT7; CS-FU1, CS-SIP2, CS-PM4.
let t: Awaited<ReturnType<typeof appDatabase>>;
const people: Record<string, User> = {};
let token: tokens.TokenActor;
let valve: { id: string; tag: string };
let released: { id: string; number: string; at: Date };
let timeZone = '';

beforeAll(async () => {
	t = await appDatabase();
	setEnv({ AUTH_LOCKOUT_FAILURES: '5' });
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	for (const row of await t.ownerSql`select id, username, full_name, email, roles from accounts`)
		people[row.username] = {
			id: row.id,
			username: row.username,
			name: row.full_name,
			email: row.email,
			roles: row.roles,
			mustChangePassword: false
		};
	await seedDemoMasterData(DEMO_PASSWORD);
	await seedDemoWork(DEMO_PASSWORD);
	await seedDemoSchedules();
	timeZone = (await currentSite())!.timeZone;
	const made = await tokens.createApiToken(people.admin!, {
		name: 'Buffer hall control system',
		scope: 'usage'
	});
	token = { kind: 'token', id: made.id, name: 'Buffer hall control system' };
	valve = { id: (await equipment.findByTag('XV-4205'))!, tag: 'XV-4205' };
	const [r] = await t.ownerSql`select w.id, w.number, tr.recorded_at as at from work_orders w
		join work_order_transitions tr on tr.work_order_id = w.id
		where tr.kind = 'released' and w.equipment_id = ${valve.id}`;
	released = { id: r!.id, number: r!.number, at: new Date(r!.at) };
});
afterAll(async () => t?.drop());

const report = (startedAt: Date, endedAt: Date, peakTemperatureC = 121.1, bar = 2.05685) =>
	usageReportSchema.parse({
		sipCycle: {
			startedAt: startedAt.toISOString(),
			endedAt: endedAt.toISOString(),
			peakTemperatureC,
			absolutePressureBar: bar,
			holdMinutes: 20
		}
	});
const followUps = () =>
	t.ownerSql`select w.id, w.number, w.follows_up, w.recorded_by_name, p.code, pl.due_on::text as due_on,
			pl.priority from work_orders w
		join procedure_versions v on v.id = w.procedure_version_id
		join procedures p on p.id = v.procedure_id
		join work_order_plans pl on pl.work_order_id = w.id and pl.version = 1
		where w.kind = 'follow_up' order by w.audit_seq`;
const mails = (like: string) =>
	t.ownerSql`select payload->>'to' as to, payload->>'subject' as subject, payload->>'text' as text
		from outbox where kind = 'mail' and payload->>'subject' like ${like} order by created_at, id`;

describe('follow-ups after the first SIP cycle following a release (9/10 item 3)', () => {
	it('a cycle that started before the release calls for nothing', async () => {
		const start = new Date(released.at.getTime() - 2 * 3_600_000);
		await recordPlantUsage(
			token,
			valve,
			report(start, new Date(start.getTime() + 45 * 60_000)),
			null
		);
		expect(await followUps()).toHaveLength(0);
	});

	it('the first cycle after it makes exactly one follow-up at once: MP-DV-02, due within 48 h, the Planners told', async () => {
		const startedAt = new Date(released.at.getTime() + 1);
		const endedAt = new Date(Math.max(Date.now(), startedAt.getTime() + 1000));
		await recordPlantUsage(token, valve, report(startedAt, endedAt), null);
		const rows = await followUps();
		expect(rows).toHaveLength(1);
		expect(rows[0]).toMatchObject({
			follows_up: released.id,
			code: 'MP-DV-02',
			recorded_by_name: 'system: follow-up scheduler',
			priority: 'high',
			due_on: siteToday(timeZone, new Date(endedAt.getTime() + 48 * 3_600_000))
		});
		const told = await mails(`Follow-up ${rows[0]!.number} %`);
		expect(told.map((m) => m.to)).toEqual([people.planner!.email]);
		expect(told[0]!.text).toContain(released.number);
		expect(told[0]!.text).toContain('within 48 h');
		const [event] = await t.ownerSql`select actor_kind, actor_name from audit_event
			where action = 'work_order.create' and entity_id = ${rows[0]!.id}`;
		expect(event).toEqual({ actor_kind: 'system', actor_name: 'follow-up scheduler' });
		// Each work order's page links the other.
		expect(await followUpLinks({ id: released.id, followsUp: null })).toEqual({
			followsUp: null,
			followUps: [{ id: rows[0]!.id, number: rows[0]!.number }]
		});
		expect(await followUpLinks({ id: rows[0]!.id, followsUp: released.id })).toEqual({
			followsUp: { id: released.id, number: released.number },
			followUps: []
		});
	});

	it('later cycles, three concurrent runs and a direct duplicate make no second one', async () => {
		const startedAt = new Date(Date.now() + 60_000);
		await recordPlantUsage(
			token,
			valve,
			report(startedAt, new Date(startedAt.getTime() + 45 * 60_000)),
			null
		);
		const runs = await Promise.all([
			createDueFollowUps(),
			createDueFollowUps(),
			createDueFollowUps()
		]);
		expect(runs.flat()).toEqual([]);
		expect((await pm.generateDueWork()).followUps).toEqual([]);
		const [one] = await followUps();
		expect(await followUps()).toHaveLength(1);
		// The database itself refuses a second follow-up of the same work order.
		await expect(
			t.ownerSql`insert into work_orders (id, site_id, number, kind, equipment_id, procedure_version_id,
				follows_up, recorded_by_name, recorded_at, audit_seq)
				select gen_random_uuid(), site_id, 'WO-TEST-0001', 'follow_up', equipment_id,
					procedure_version_id, follows_up, recorded_by_name, recorded_at, audit_seq
				from work_orders where id = ${one!.id}`
		).rejects.toMatchObject({ code: '23505', constraint_name: 'work_orders_follow_up_once' });
	});
});

describe('a SIP cycle that was not saturated steam is a deviation for Quality (9/10 item 2)', () => {
	let deviationId = '';

	it('121 °C at 1.2 bar absolute raises a numbered deviation, e-mailed to Quality and in their queue', async () => {
		const [{ n }] = (await t.ownerSql`select count(*)::int as n from deviations`) as unknown as [
			{ n: number }
		];
		const startedAt = new Date(Date.now() + 3 * 3_600_000);
		const answer = await recordPlantUsage(
			token,
			valve,
			report(startedAt, new Date(startedAt.getTime() + 45 * 60_000), 121, 1.2),
			null
		);
		expect(answer.sipCycle!.steamMatches).toBe(false);
		const [dev] =
			await t.ownerSql`select id, number, description, recorded_by_name from sip_deviations`;
		deviationId = dev!.id;
		const year = siteToday(timeZone).slice(0, 4);
		// One series with the work orders' deviations.
		expect(dev!.number).toBe(`DEV-${year}-${String(n + 1).padStart(4, '0')}`);
		expect(dev!.description).toMatch(
			/121 °C at 1\.2 bar absolute, where saturated steam is 104\.\d+ °C/
		);
		expect(dev!.recorded_by_name).toBe('token: Buffer hall control system');
		const told = await mails(`Deviation ${dev!.number}:%`);
		expect(told.map((m) => m.to)).toEqual([people.quality!.email]);
		const queue = (await queuesOf(people.quality!)).find((q) => q.key === 'deviations')!;
		expect(queue.items.map((i) => i.id)).toContain(deviationId);
		// The same report again is the same cycle: no second deviation.
		await recordPlantUsage(
			token,
			valve,
			report(startedAt, new Date(startedAt.getTime() + 45 * 60_000), 121, 1.2),
			null
		);
		expect(await t.ownerSql`select 1 from sip_deviations`).toHaveLength(1);
	});

	it('only Quality dispositions it, with a Reviewed signature that re-authenticates; once', async () => {
		await expect(
			sip.dispositionSipDeviation(
				people.tech1!,
				deviationId,
				'accepted',
				'Looks fine.',
				DEMO_PASSWORD
			)
		).rejects.toMatchObject({ status: 403 });
		await expect(
			sip.dispositionSipDeviation(
				people.quality!,
				deviationId,
				'capa',
				'Air in the steam.',
				'wrong'
			)
		).rejects.toMatchObject({ status: 401 });
		await expect(
			sip.dispositionSipDeviation(people.quality!, deviationId, 'capa', '  ', DEMO_PASSWORD)
		).rejects.toMatchObject({ status: 422, field: 'text' });
		await sip.dispositionSipDeviation(
			people.quality!,
			deviationId,
			'capa',
			'Air in the steam supply: CAPA opened; the batches after the cycle are assessed.',
			DEMO_PASSWORD
		);
		const found = (await sip.getSipDeviation(deviationId))!;
		expect(found.decision).toBe('capa');
		expect(found.signatures).toHaveLength(1);
		expect(found.signatures[0]).toMatchObject({ meaning: 'reviewed', matches: true });
		await expect(
			sip.dispositionSipDeviation(people.quality!, deviationId, 'accepted', 'Again.', DEMO_PASSWORD)
		).rejects.toMatchObject({ status: 409 });
		const queue = (await queuesOf(people.quality!)).find((q) => q.key === 'deviations')!;
		expect(queue.items.map((i) => i.id)).not.toContain(deviationId);
		expect((await verifyChain(t.appSql)).ok).toBe(true);
	});
});

describe('the Planners’ daily digest (9/10 item 4)', () => {
	const today = () => siteToday(timeZone);
	it('waits for the digest hour; then one message per Planner with every overdue and due-soon item', async () => {
		// 02:00 UTC is 03:00 (winter) or 04:00 (summer) in Europe/Berlin: before 06:00.
		const early = await pm.sendPmDigest(new Date(`${today()}T02:00:00Z`));
		expect(early.sent).toBe(false);
		const sent = await pm.sendPmDigest(new Date(`${today()}T10:00:00Z`));
		expect(sent.sent).toBe(true);
		if (!sent.sent) return;
		// The demo schedules: XV-3104 overdue, XV-3106 due soon (src/lib/server/db/demo/schedules.ts).
		expect(sent.overdue.map((i) => i.title).join()).toContain('XV-3104');
		expect(sent.dueSoon.map((i) => i.title).join()).toContain('XV-3106');
		const told = await mails(`Preventive maintenance on ${today()}:%`);
		expect(told.map((m) => m.to)).toEqual([people.planner!.email]);
		expect(told[0]!.subject).toBe(
			`Preventive maintenance on ${today()}: ${sent.overdue.length} overdue, ${sent.dueSoon.length} due soon`
		);
		expect(told[0]!.text).toContain('XV-3104');
		expect(told[0]!.text).toContain('XV-3106');
	});

	it('once a day, however many runs at once', async () => {
		const again = await pm.sendPmDigest(new Date(`${today()}T15:00:00Z`));
		expect(again.sent).toBe(false);
		const next = new Date(Date.parse(`${today()}T10:00:00Z`) + 86_400_000);
		const runs = await Promise.all([
			pm.sendPmDigest(next),
			pm.sendPmDigest(next),
			pm.sendPmDigest(next)
		]);
		expect(runs.filter((r) => r.sent)).toHaveLength(1);
		const [row] = await t.ownerSql`select count(*)::int as n from pm_digests`;
		expect(row!.n).toBe(2);
		const [event] = await t.ownerSql`select actor_kind, actor_name from audit_event
			where action = 'pm.digest' order by seq limit 1`;
		expect(event).toEqual({ actor_kind: 'system', actor_name: 'PM scheduler' });
	});
});
