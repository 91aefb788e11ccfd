import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as tokens from '../../src/lib/server/api-tokens';
import type { User } from '../../src/lib/server/auth/guard';
import { verifyChain } from '../../src/lib/server/audit/verify';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { appDatabase } from './helpers/app-database';
import { serveBuiltApp } from './helpers/served-app';

// The plant's usage reports (issue 9/10 item 2) over HTTP against the built app: a usage-scoped
// API token (created by an Administrator, shown once, stored hashed, revocable, every use and
// refusal audited), checked before anything else; SIP cycles counted once; the temperature–
// pressure check against saturated steam (IAPWS-IF97 region 4, shared/CHECK-VALUES.md:
// 121.1 °C ↔ 2.05685 bar abs; at 1.2 bar abs saturated steam is about 104.8 °C, so 121 °C there
// is not saturated steam). REQUIREMENTS AT7, SE10; CS-SIP1, CS-SIP2, CS-TOK1, CS-TOK2.
let t: Awaited<ReturnType<typeof appDatabase>>;
let app: Awaited<ReturnType<typeof serveBuiltApp>>;
let admin: User;
let token = '';
let tokenId = '';

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await seedDemoMasterData(DEMO_PASSWORD);
	const [a] = await t.ownerSql`select id, username, full_name, email, roles from accounts
		where username = 'admin'`;
	admin = {
		id: a!.id,
		username: a!.username,
		name: a!.full_name,
		email: a!.email,
		roles: a!.roles,
		mustChangePassword: false
	};
	({ token, id: tokenId } = await tokens.createApiToken(admin, {
		name: 'Filling line control system',
		scope: 'usage'
	}));
	app = await serveBuiltApp(t.appUrl, 3196);
});
afterAll(async () => {
	await app?.stop();
	await t?.drop();
});

const post = (path: string, body: unknown, bearer: string | null = token) =>
	fetch(`${app.origin}${path}`, {
		method: 'POST',
		headers: {
			'content-type': 'application/json',
			...(bearer === null ? {} : { authorization: `Bearer ${bearer}` })
		},
		body: typeof body === 'string' ? body : JSON.stringify(body)
	});
const cycle = (startedAt: string, peakTemperatureC: number, absolutePressureBar: number) => ({
	sipCycle: {
		startedAt,
		endedAt: new Date(Date.parse(startedAt) + 45 * 60_000).toISOString(),
		peakTemperatureC,
		absolutePressureBar,
		holdMinutes: 20
	}
});
const counter = async (tag: string, kind = 'sip_cycles') =>
	Number(
		(
			await t.ownerSql`select coalesce(sum(u.amount), 0)::float8 as n from equipment_usage u
				join equipment e on e.id = u.equipment_id where e.tag = ${tag} and u.kind = ${kind}`
		)[0]!.n
	);
const refusals = async () =>
	(await t.ownerSql`select new_values->>'reason' as reason, actor_kind, actor_id from audit_event
		where action = 'api_token.refused' order by seq`) as unknown as {
		reason: string;
		actor_kind: string;
		actor_id: string | null;
	}[];

describe('the plant API', () => {
	it('only an administrator creates tokens; the token is shown once and stored only as its hash', async () => {
		const [quality] = await t.ownerSql`select id, username, full_name, email, roles from accounts
			where username = 'quality'`;
		await expect(
			tokens.createApiToken(
				{ ...admin, id: quality!.id, roles: quality!.roles, name: quality!.full_name },
				{ name: 'Another system', scope: 'usage' }
			)
		).rejects.toMatchObject({ status: 403 });
		expect(token).toMatch(/^cs_usage_[A-Za-z0-9_-]{43}$/);
		const stored =
			await t.ownerSql`select encode(token_hash, 'hex') as hash, prefix from api_tokens`;
		expect(stored).toHaveLength(1);
		expect(stored[0]!.hash).toMatch(/^[0-9a-f]{64}$/);
		expect(token.startsWith(stored[0]!.prefix)).toBe(true);
		// Nowhere in the database, nor in the trail, is the token itself.
		const [found] = await t.ownerSql`select count(*)::int as n from audit_event
			where coalesce(new_values::text, '') like ${'%' + token + '%'}`;
		expect(found!.n).toBe(0);
	});

	it('no token, an unknown token: 401 JSON whatever the path or the body, and audited (AT7)', async () => {
		const before = (await refusals()).length;
		const none = await post('/api/v1/equipment/NO-SUCH-TAG/usage', 'not json at all', null);
		expect(none.status).toBe(401);
		expect(await none.json()).toEqual({ message: expect.stringMatching(/Bearer/), field: null });
		const unknown = await post(
			'/api/v1/equipment/XV-3104/usage',
			cycle('2026-11-01T06:00:00Z', 121, 2),
			'cs_usage_guess'
		);
		expect(unknown.status).toBe(401);
		const elsewhere = await fetch(`${app.origin}/api/v1/equipment/XV-3104/anything/else`);
		expect(elsewhere.status).toBe(401);
		const rows = (await refusals()).slice(before);
		expect(rows.map((r) => r.reason)).toEqual(['missing', 'unknown', 'missing']);
		expect(await t.ownerSql`select 1 from sip_cycles`).toHaveLength(0);
	});

	it('a SIP cycle at saturated steam is recorded once; the same report again is answered the same and counted once', async () => {
		const start = await counter('XV-3104');
		const report = cycle('2026-11-02T06:00:00Z', 121.1, 2.05685);
		const first = await post('/api/v1/equipment/XV-3104/usage', report);
		expect(first.status).toBe(200);
		const body = await first.json();
		expect(body).toMatchObject({
			equipment: 'XV-3104',
			sipCycle: { count: 1, steamMatches: true, toleranceC: 2 }
		});
		expect(body.sipCycle.saturationTemperatureC).toBeCloseTo(121.1, 1);
		const again = await post('/api/v1/equipment/xv-3104/usage', report);
		expect(again.status).toBe(200);
		expect(await again.json()).toEqual(body);
		expect(await counter('XV-3104')).toBe(start + 1);
		const events = await t.ownerSql`select actor_kind, actor_id, actor_name from audit_event
			where action = 'equipment.sip_cycle'`;
		expect(events).toEqual([
			{ actor_kind: 'token', actor_id: tokenId, actor_name: 'Filling line control system' }
		]);
	});

	it('121 °C reported at 1.2 bar absolute is not saturated steam: the cycle is flagged for Quality', async () => {
		const start = await counter('XV-3104');
		const r = await post(
			'/api/v1/equipment/XV-3104/usage',
			cycle('2026-11-03T06:00:00Z', 121, 1.2)
		);
		const body = await r.json();
		expect(body.sipCycle.steamMatches).toBe(false);
		expect(body.sipCycle.saturationTemperatureC).toBeGreaterThan(104);
		expect(body.sipCycle.saturationTemperatureC).toBeLessThan(106);
		const [flag] = await t.ownerSql`select count(*)::int as n from audit_event
			where action = 'equipment.sip_cycle_off_steam'`;
		expect(flag!.n).toBe(1);
		expect(await counter('XV-3104')).toBe(start + 1); // it still happened: the cycle counts
	});

	it('operating hours add to their counter', async () => {
		const start = await counter('P-3101', 'operating_hours');
		const r = await post('/api/v1/equipment/P-3101/usage', {
			operatingHours: { hours: 12.5, until: '2026-11-03T18:00:00Z' }
		});
		expect(r.status).toBe(200);
		expect(await counter('P-3101', 'operating_hours')).toBe(start + 12.5);
	});

	it('bad reports are refused with the field named and store nothing; an unknown tag is 404', async () => {
		const before = await counter('XV-3104');
		const cases: [unknown, number, string | null][] = [
			['{"sipCycle":', 400, null],
			[{}, 400, null],
			[
				{ sipCycle: { ...cycle('2026-11-04T06:00:00Z', 121, 2).sipCycle, extra: 1 } },
				400,
				'sipCycle'
			],
			[{ ...cycle('2026-11-04T06:00:00Z', 121, 2), note: 'x' }, 400, null],
			[
				{
					sipCycle: {
						...cycle('2026-11-04T06:00:00Z', 121, 2).sipCycle,
						endedAt: '2026-11-04T05:00:00Z'
					}
				},
				400,
				'sipCycle.endedAt'
			],
			[cycle('2026-11-04T06:00:00Z', Number.NaN, 2), 400, 'sipCycle.peakTemperatureC'],
			[
				{
					sipCycle: { ...cycle('2026-11-04T06:00:00Z', 121, 2).sipCycle, startedAt: 'not a time' }
				},
				400,
				'sipCycle.startedAt'
			]
		];
		for (const [body, status, field] of cases) {
			const r = await post('/api/v1/equipment/XV-3104/usage', body);
			expect(r.status, JSON.stringify(body)).toBe(status);
			const answer = await r.json();
			expect(answer.message).toEqual(expect.any(String));
			if (field) expect(answer.field, JSON.stringify(body)).toBe(field);
		}
		const missing = await post(
			'/api/v1/equipment/XV-9999/usage',
			cycle('2026-11-04T06:00:00Z', 121, 2)
		);
		expect(missing.status).toBe(404);
		expect(await counter('XV-3104')).toBe(before);
	});

	it('a token without the scope is refused (403) and audited; a read token reads, a report token cannot read', async () => {
		const reader = await tokens.createApiToken(admin, {
			name: 'Line display',
			scope: 'usage:read'
		});
		expect(reader.token).toMatch(/^cs_usage-read_[A-Za-z0-9_-]{43}$/);
		const before = await counter('XV-3104');
		const wrong = await post(
			'/api/v1/equipment/XV-3104/usage',
			cycle('2026-11-04T09:00:00Z', 121.1, 2.05685),
			reader.token
		);
		expect(wrong.status).toBe(403);
		expect((await wrong.json()).message).toMatch(/scope usage\b/);
		expect(await counter('XV-3104')).toBe(before);
		expect((await refusals()).at(-1)).toMatchObject({
			reason: 'scope',
			actor_kind: 'token',
			actor_id: reader.id
		});
		const get = (bearer: string, query = '') =>
			fetch(`${app.origin}/api/v1/equipment/XV-3104/usage${query}`, {
				headers: { authorization: `Bearer ${bearer}` }
			});
		const read = await get(reader.token, '?limit=1');
		expect(read.status).toBe(200);
		const body = await read.json();
		expect(body).toMatchObject({ equipment: 'XV-3104', sipCycles: before, operatingHours: 0 });
		expect(body.latestCycles).toHaveLength(1);
		expect(body.latestCycles[0].startedAt).toBe('2026-11-03T06:00:00.000Z');
		const [readEvent] = await t.ownerSql`select actor_kind, actor_id from audit_event
			where action = 'equipment.usage_read' order by seq desc limit 1`;
		expect(readEvent).toEqual({ actor_kind: 'token', actor_id: reader.id });
		expect((await get(reader.token, '?limit=0')).status).toBe(400);
		const noRead = await get(token);
		expect(noRead.status).toBe(403);
		expect((await refusals()).at(-1)).toMatchObject({ reason: 'scope', actor_id: tokenId });
	});

	it('a revoked token is refused (401) and the refusal names the token; the chain still verifies', async () => {
		await tokens.revokeApiToken(admin, tokenId, 'The control system was replaced.');
		const r = await post(
			'/api/v1/equipment/XV-3104/usage',
			cycle('2026-11-05T06:00:00Z', 121.1, 2.05685)
		);
		expect(r.status).toBe(401);
		expect((await r.json()).message).toMatch(/revoked/);
		const last = (await refusals()).at(-1)!;
		expect(last).toMatchObject({ reason: 'revoked', actor_kind: 'token', actor_id: tokenId });
		expect((await verifyChain(t.appSql)).ok).toBe(true);
		// The token never reached the server's log.
		expect(app.stderr()).not.toContain(token);
	});
});
