import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mayAccess, routeAccess, type Access } from '../../src/lib/access';
import type { Role } from '../../src/lib/roles';
import {
	DEMO_PASSWORD,
	demoAccounts,
	seedDemoAccounts,
	seedDemoPlant
} from '../../src/lib/server/db/seed';
import { seedDemoMasterData, seedDemoWork } from '../../src/lib/server/db/demo/index';
import * as work from '../../src/lib/server/work-orders';
import { appDatabase } from './helpers/app-database';
import { concretePaths, layoutsOnly, writeRoutes } from './helpers/routes';
import { serveBuiltApp, signInOverHttp } from './helpers/served-app';

// The role × route matrix (REQUIREMENTS AC1; issue 2/10): every route that exists, requested by
// every demo role and by an anonymous client, over HTTP against the built app. The expected
// answer comes from $lib/access, whose completeness tests/unit/route-rules.spec.ts checks.
let t: Awaited<ReturnType<typeof appDatabase>>;
const ids: Record<string, string> = {};
let app: Awaited<ReturnType<typeof serveBuiltApp>>;
const cookies = new Map<string, string>();
let someAccountId = '';

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await seedDemoMasterData(DEMO_PASSWORD);
	await seedDemoWork(DEMO_PASSWORD);
	const one = async (query: Promise<unknown>) => ((await query) as { id: string }[])[0]!.id;
	ids.equipment = await one(t.ownerSql`select id from equipment order by tag limit 1`);
	ids.instrument = await one(t.ownerSql`select id from instruments order by code limit 1`);
	ids.part = await one(t.ownerSql`select id from parts order by part_number limit 1`);
	ids.procedure = await one(t.ownerSql`select id from procedures order by code limit 1`);
	ids.version = await one(
		t.ownerSql`select id from procedure_versions order by recorded_at limit 1`
	);
	ids.workOrder = await one(
		t.ownerSql`select w.id from work_orders w join work_order_transitions t on t.work_order_id = w.id
			where t.kind = 'executed' order by w.number limit 1`
	);
	[{ id: someAccountId }] =
		(await t.ownerSql`select id from accounts where username = 'tech1'`) as unknown as [
			{ id: string }
		];
	app = await serveBuiltApp(t.appUrl, 3191);
	for (const account of demoAccounts) {
		const signedIn = await signInOverHttp(app.origin, account.username, DEMO_PASSWORD);
		expect(signedIn.cookie, account.username).toBeTruthy();
		cookies.set(account.username, signedIn.cookie!);
	}
});
afterAll(async () => {
	await app?.stop();
	await t?.drop();
});

const paths = () =>
	concretePaths({
		equipment: ids.equipment!,
		instrument: ids.instrument!,
		part: ids.part!,
		procedure: ids.procedure!,
		version: ids.version!,
		workOrder: ids.workOrder!,
		account: someAccountId
	});

const get = (path: string, cookie?: string) =>
	fetch(`${app.origin}${path}`, { redirect: 'manual', headers: cookie ? { cookie } : {} });

describe('role × route matrix', () => {
	it('covers every route id in the access table', () => {
		const covered = [...Object.keys(paths()), ...layoutsOnly].sort();
		expect(covered).toEqual(Object.keys(routeAccess).sort());
	});

	const who: { name: string; username?: string; roles: Role[] }[] = [
		{ name: 'anonymous', roles: [] },
		...demoAccounts.map((a) => ({ name: a.username, username: a.username, roles: a.roles }))
	];

	for (const person of who) {
		it(`${person.name}: every page and API route answers as its rule says`, async () => {
			const cookie = person.username ? cookies.get(person.username) : undefined;
			for (const [routeId, path] of Object.entries(paths())) {
				const access = routeAccess[routeId as keyof typeof routeAccess] as Access;
				const response = await get(path, cookie);
				const allowed = mayAccess(access, person.roles, Boolean(cookie));
				const where = `${person.name} GET ${path} (${routeId})`;
				if (access === 'token:usage') {
					expect(response.status, where).toBe(401);
					expect((await response.json()).message, where).toMatch(/Bearer/);
				} else if (allowed) {
					expect([401, 403], where).not.toContain(response.status);
					expect(response.status, where).toBeLessThan(500);
				} else if (!cookie && path.startsWith('/api/')) {
					expect(response.status, where).toBe(401);
					// The one error shape (api-errors.ts): {message, field}; openapi.spec.ts checks it whole.
					expect(await response.json(), where).toMatchObject({ message: 'Sign in first' });
				} else if (!cookie) {
					expect(response.status, where).toBe(303);
					expect(response.headers.get('location'), where).toMatch(/^\/login\?callbackUrl=/);
				} else {
					expect(response.status, where).toBe(403);
				}
			}
		});
	}

	it('the inspector cannot change anything: every form action and write endpoint answers 403 and records nothing but the refusal (8/10, AC1)', async () => {
		// Every action of every +page.server.ts and every POST/PUT/PATCH/DELETE of a +server.ts,
		// found in the route tree (helpers/routes.ts): a new one is tried too.
		const writes = writeRoutes();
		// Signing in and out and changing one's own password are every person's, not record changes.
		const own = (w: (typeof writes)[number]) =>
			w.routeId === '/login' || w.routeId === '/logout' || w.routeId === '/(app)/account';
		const tried = writes.filter((w) => !own(w));
		expect(tried.length).toBeGreaterThan(25); // the scan found the actions
		const changes = async () =>
			(
				await t.ownerSql`select count(*)::int as n from audit_event
					where action not in ('auth.access_denied', 'signature.refused', 'api_token.refused')`
			)[0]!.n as number;
		const before = await changes();
		const refused: string[] = [];
		for (const w of tried) {
			const path = paths()[w.routeId];
			expect(path, `a path for ${w.routeId}`).toBeTruthy();
			const url = `${app.origin}${path!.split('?')[0]}${w.action ? `?/${w.action}` : ''}`;
			const response = await fetch(url, {
				method: w.method,
				redirect: 'manual',
				headers: {
					origin: app.origin,
					accept: 'text/html',
					cookie: cookies.get('inspector')!,
					'content-type': 'application/x-www-form-urlencoded'
				},
				body: new URLSearchParams({
					password: DEMO_PASSWORD,
					seen: '0',
					reason: 'an inspector tries'
				})
			});
			// A token-only route refuses every session with 401 (no token), before anything else.
			const expected =
				routeAccess[w.routeId as keyof typeof routeAccess] === 'token:usage' ? 401 : 403;
			if (response.status !== expected) refused.push(`${w.method} ${url}: ${response.status}`);
		}
		expect(refused).toEqual([]);
		expect(await changes()).toBe(before);
	});

	it('an inspector’s POST to an administration action is refused with 403 and audited (AC1, AT7)', async () => {
		const response = await fetch(`${app.origin}/people/new`, {
			method: 'POST',
			redirect: 'manual',
			headers: {
				origin: app.origin,
				cookie: cookies.get('inspector')!,
				'content-type': 'application/x-www-form-urlencoded'
			},
			body: new URLSearchParams({
				username: 'intruder',
				fullName: 'Not Allowed',
				email: 'x@example.org',
				roles: 'administrator'
			})
		});
		expect(response.status).toBe(403);
		const created = await t.ownerSql`select 1 from accounts where username = 'intruder'`;
		expect(created).toHaveLength(0);
		const [denied] = await t.ownerSql`select actor_name, new_values from audit_event
			where action = 'auth.access_denied' and new_values->>'method' = 'POST' order by seq desc limit 1`;
		expect(denied).toMatchObject({
			actor_name: 'Iris Moravec',
			new_values: { path: '/people/new' }
		});
	});

	it('a technician’s POST to register equipment is refused with 403 and stores nothing (AC1)', async () => {
		const response = await fetch(`${app.origin}/plant/new`, {
			method: 'POST',
			redirect: 'manual',
			headers: {
				origin: app.origin,
				cookie: cookies.get('tech1')!,
				'content-type': 'application/x-www-form-urlencoded'
			},
			body: new URLSearchParams({ __superform_json: JSON.stringify([{ tag: 'XV-9999' }]) })
		});
		expect(response.status).toBe(403);
		expect(await t.ownerSql`select 1 from equipment where tag = 'XV-9999'`).toHaveLength(0);
	});

	it('a technician’s POST to release a work order, and an inspector’s to save a step, are refused with 403; nothing is stored (AC1, MR4)', async () => {
		const count = async () =>
			(
				await t.ownerSql`select (select count(*) from work_order_transitions where work_order_id = ${ids.workOrder!})::int
					+ (select count(*) from step_entries where work_order_id = ${ids.workOrder!})::int as n`
			)[0]!.n as number;
		const before = await count();
		const post = (path: string, cookie: string, body: Record<string, string>) =>
			fetch(`${app.origin}${path}`, {
				method: 'POST',
				redirect: 'manual',
				headers: {
					origin: app.origin,
					cookie,
					'content-type': 'application/x-www-form-urlencoded'
				},
				body: new URLSearchParams(body)
			});
		const release = await post(`/work/${ids.workOrder}?/release`, cookies.get('tech1')!, {
			password: DEMO_PASSWORD,
			seen: '0'
		});
		expect(release.status).toBe(403);
		const save = await post(
			`/work/${ids.workOrder}/steps/isolate?/save`,
			cookies.get('inspector')!,
			{ 'value:loto-permit': 'LP-1', seen: '0' }
		);
		expect(save.status).toBe(403);
		expect(await count()).toBe(before);
	});

	it('bad input to a step save is a clear refusal, never a 500: a broken body, no version, unstorable text', async () => {
		const path = `/work/${ids.workOrder}/steps/isolate?/save`;
		const send = (body: BodyInit, type: string) =>
			fetch(`${app.origin}${path}`, {
				method: 'POST',
				redirect: 'manual',
				headers: {
					origin: app.origin,
					accept: 'text/html',
					cookie: cookies.get('tech1')!,
					'content-type': type
				},
				body
			});
		const broken = await send('--x\r\nnot a multipart body', 'multipart/form-data; boundary=x');
		expect(broken.status).toBe(400);
		const noVersion = await send(
			new URLSearchParams({ 'value:loto-permit': 'LP-1' }),
			'application/x-www-form-urlencoded'
		);
		expect(noVersion.status).toBe(400);
		const nul = await send(
			new URLSearchParams({ 'value:loto-permit': 'LP\u00001', seen: '0' }),
			'application/x-www-form-urlencoded'
		);
		expect([400, 409]).toContain(nul.status);
		const huge = await send(
			new URLSearchParams({ 'value:loto-permit': 'x'.repeat(100_000), seen: '0' }),
			'application/x-www-form-urlencoded'
		);
		expect(huge.status).toBeLessThan(500);
	});

	it('a tightening pass: an inspector is refused 403; broken input is 400 and a wrong field 404, never a 500; nothing is stored (6/10)', async () => {
		const count = async () =>
			(await t.ownerSql`select count(*)::int as n from tightening_passes`)[0]!.n as number;
		const before = await count();
		const send = (cookie: string, body: Record<string, string>) =>
			fetch(`${app.origin}/work/${ids.workOrder}/steps/tighten?/pass`, {
				method: 'POST',
				redirect: 'manual',
				headers: {
					origin: app.origin,
					accept: 'text/html',
					cookie,
					'content-type': 'application/x-www-form-urlencoded'
				},
				body: new URLSearchParams(body)
			});
		expect(
			(await send(cookies.get('inspector')!, { tick: 'tightening:1', seen: '0' })).status
		).toBe(403);
		for (const body of <Record<string, string>[]>[
			{ tick: 'tightening:1' },
			{ tick: 'tightening:x', seen: '0' },
			{ tick: 'Tightening; drop table:1', seen: '0' },
			{ seen: '0' }
		])
			expect((await send(cookies.get('tech1')!, body)).status, JSON.stringify(body)).toBe(400);
		expect((await send(cookies.get('tech1')!, { tick: 'nothing:1', seen: '0' })).status).toBe(404);
		expect(await count()).toBe(before);
	});

	it('photo upload over HTTP: roles, origin and content checked; a stored photo is served with its hash (7/10)', async () => {
		const [wo] =
			await t.ownerSql`select w.id from work_orders w join equipment e on e.id = w.equipment_id
			where e.tag = 'XV-3103'`;
		const woId = wo!.id as string;
		const seen = async () =>
			String(
				(await work.getWorkOrder(woId))!.steps.find((x) => x.step.key === 'limiter-before')!.status
					.revision
			);
		const count = async () =>
			(await t.ownerSql`select count(*)::int as n from evidence where work_order_id = ${woId}`)[0]!
				.n as number;
		const before = await count();
		const upload = async (cookie: string, body: Uint8Array, query: string, origin = app.origin) =>
			fetch(`${app.origin}/work/${woId}/evidence?${query}`, {
				method: 'POST',
				redirect: 'manual',
				headers: { origin, cookie, 'content-type': 'application/octet-stream' },
				body: body as BodyInit
			});
		const photo = await sharp({
			create: { width: 64, height: 48, channels: 3, background: { r: 200, g: 200, b: 190 } }
		})
			.jpeg()
			.toBuffer();
		const q = async (more = '') => `step=limiter-before&seen=${await seen()}${more}`;
		expect((await upload(cookies.get('inspector')!, photo, await q())).status).toBe(403);
		expect(
			(await upload(cookies.get('tech1')!, photo, await q(), 'http://evil.example')).status
		).toBe(403);
		const bad = await upload(cookies.get('tech1')!, photo, 'step=../../etc&seen=0');
		expect(bad.status).toBe(400);
		expect(((await bad.json()) as { message: string }).message).toMatch(/Reload the page/);
		const svg = await upload(cookies.get('tech1')!, Buffer.from('<svg/>'), await q());
		expect(svg.status).toBe(400);
		expect(((await svg.json()) as { message: string }).message).toMatch(/not a JPEG, PNG or WebP/);
		expect(await count()).toBe(before);
		const ok = await upload(cookies.get('tech1')!, photo, await q());
		expect(ok.status).toBe(201);
		const saved = (await ok.json()) as { evidenceId: string; sha256: string };
		const got = await fetch(`${app.origin}/work/${woId}/evidence/${saved.evidenceId}`, {
			headers: { cookie: cookies.get('inspector')! }
		});
		expect(got.status).toBe(200);
		expect(got.headers.get('content-type')).toBe('image/jpeg');
		expect(got.headers.get('x-content-sha256')).toBe(saved.sha256);
		expect(Buffer.from(await got.arrayBuffer()).equals(photo)).toBe(true);
		const anonymous = await fetch(`${app.origin}/work/${woId}/evidence/${saved.evidenceId}`, {
			redirect: 'manual'
		});
		expect(anonymous.status).toBeGreaterThanOrEqual(300);
		expect(anonymous.status).toBeLessThan(500);
		// A large body elsewhere is refused before it is read.
		const big = await fetch(`${app.origin}/work/${woId}?/plan`, {
			method: 'POST',
			redirect: 'manual',
			headers: {
				origin: app.origin,
				cookie: cookies.get('planner')!,
				'content-type': 'application/x-www-form-urlencoded'
			},
			body: 'x='.padEnd(2 * 1024 * 1024, 'x')
		});
		expect(big.status).toBe(413);
	});

	it('GET /api/v1/queues answers each person their own queues as JSON', async () => {
		const res = await get('/api/v1/queues', cookies.get('quality'));
		expect(res.status).toBe(200);
		const body = (await res.json()) as { queues: { key: string; items: unknown[] }[] };
		expect(body.queues.map((q) => q.key)).toEqual(['review', 'deviations']);
		expect(body.queues[0]!.items.length).toBeGreaterThan(0);
	});

	it('a blank reason for a change is answered 422 and stores nothing (AT2)', async () => {
		const post = (reason: string) =>
			fetch(`${app.origin}/plant/${ids.equipment}?/quarantine`, {
				method: 'POST',
				redirect: 'manual',
				headers: {
					origin: app.origin,
					accept: 'text/html',
					cookie: cookies.get('quality')!,
					'content-type': 'application/x-www-form-urlencoded'
				},
				body: new URLSearchParams({ reason })
			});
		for (const reason of ['', '   \t ']) expect((await post(reason)).status).toBe(422);
		const rows = await t.ownerSql`select 1 from equipment_status_changes
			where equipment_id = ${ids.equipment!} and status = 'quarantined'`;
		expect(rows).toHaveLength(0);
	});

	it('an anonymous POST to an action goes nowhere', async () => {
		const response = await fetch(`${app.origin}/people/new`, {
			method: 'POST',
			redirect: 'manual',
			// A browser's own form post (no JavaScript): SvelteKit answers it with a real redirect.
			headers: {
				origin: app.origin,
				accept: 'text/html',
				'content-type': 'application/x-www-form-urlencoded'
			},
			body: new URLSearchParams({
				username: 'intruder2',
				fullName: 'Nobody',
				email: 'x@example.org',
				roles: 'technician'
			})
		});
		expect(response.status).toBe(303);
		expect(response.headers.get('location')).toBe('/login?callbackUrl=%2Fpeople%2Fnew');
		expect(await t.ownerSql`select 1 from accounts where username = 'intruder2'`).toHaveLength(0);
	});

	it('a record has one address: an upper-case uuid is a 404', async () => {
		const response = await get(`/people/${someAccountId.toUpperCase()}`, cookies.get('admin'));
		expect(response.status).toBe(404);
	});

	it('sign-in never redirects off the site, whatever callbackUrl says', async () => {
		for (const target of [
			'/%5Cevil.example',
			'//evil.example',
			'https://evil.example/',
			'/%09/evil.example'
		]) {
			const response = await get(`/login?callbackUrl=${target}`, cookies.get('tech1'));
			expect(response.status, target).toBe(303);
			expect(response.headers.get('location'), target).toBe('/');
		}
	});

	it('a NUL character in the username is a clear refusal, never a 500', async () => {
		const direct = await fetch(`${app.origin}/auth/callback/credentials`, {
			method: 'POST',
			redirect: 'manual',
			headers: { origin: app.origin, 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ username: 'tech\u00001', password: 'x', callbackUrl: '/' })
		});
		expect(direct.status).toBe(302);
		expect(direct.headers.get('location')).toMatch(
			/\/login\?error=CredentialsSignin&code=credentials$/
		);
		const form = await fetch(`${app.origin}/login`, {
			method: 'POST',
			redirect: 'manual',
			headers: {
				origin: app.origin,
				accept: 'text/html',
				'content-type': 'application/x-www-form-urlencoded'
			},
			body: new URLSearchParams({
				username: 'tech\u00001',
				password: 'x',
				providerId: 'credentials',
				redirectTo: '/'
			})
		});
		expect(form.status).toBe(400);
		expect(await form.text()).toContain('This contains characters that cannot be stored');
	});

	it('GET /auth/session answers the signed-in person with roles, from any HTTP client', async () => {
		const response = await get('/auth/session', cookies.get('quality'));
		expect(await response.json()).toMatchObject({
			user: { username: 'quality', roles: ['quality'], name: 'Quentin Aldous' }
		});
	});
});
