import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as tokens from '../../src/lib/server/api-tokens';
import type { User } from '../../src/lib/server/auth/guard';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import { resetRateLimits } from '../../src/lib/server/rate-limit';
import { reauthenticate, SignatureError } from '../../src/lib/server/signatures/index';
import { appDatabase, setEnv } from './helpers/app-database';
import { serveBuiltApp, signInOverHttp } from './helpers/served-app';

// Hardening (issue 10/10 item 1; REQUIREMENTS SE2 headers, SE5 rate limits, ES7): the built app's
// security headers and Content-Security-Policy (CSP Level 3, W3C: no 'unsafe-inline' for
// scripts, frame-ancestors 'none'), cookies HttpOnly + SameSite=Lax, and Secure + HSTS when served
// over HTTPS (RFC 6265bis §4.1.2; RFC 6797); and the rate limits of src/lib/server/rate-limit.ts,
// set low here: 429 with Retry-After (RFC 6585 §4; RFC 9110 §10.2.3), per address, per person and
// per token, in the API's one error shape.
let t: Awaited<ReturnType<typeof appDatabase>>;
let app: Awaited<ReturnType<typeof serveBuiltApp>>;
let secure: Awaited<ReturnType<typeof serveBuiltApp>>;
const people: Record<string, User> = {};

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await seedDemoMasterData(DEMO_PASSWORD);
	for (const row of await t.ownerSql`select id, username, full_name, email, roles from accounts`)
		people[row.username] = {
			id: row.id,
			username: row.username,
			name: row.full_name,
			email: row.email,
			roles: row.roles,
			mustChangePassword: false
		};
	app = await serveBuiltApp(t.appUrl, 3197, {
		RATE_LIMIT_SIGN_IN_PER_ADDRESS: '4',
		RATE_LIMIT_API_PER_PERSON: '5',
		RATE_LIMIT_API_PER_TOKEN: '3',
		RATE_LIMIT_API_PER_ADDRESS: '1000'
	});
	secure = await serveBuiltApp(t.appUrl, 3198, { ORIGIN: 'https://127.0.0.1:3198' });
});
afterAll(async () => {
	await app?.stop();
	await secure?.stop();
	await t?.drop();
});

describe('headers and cookies', () => {
	it('pages carry a CSP with nonce-only inline scripts and no framing; nosniff, referrer policy; no HSTS over HTTP', async () => {
		const r = await fetch(`${app.origin}/login`);
		const csp = r.headers.get('content-security-policy') ?? '';
		const directive = (name: string) =>
			csp
				.split(';')
				.map((d) => d.trim())
				.find((d) => d.startsWith(`${name} `)) ?? '';
		expect(directive('script-src')).toMatch(/^script-src 'self' 'nonce-[A-Za-z0-9+/=]+'$/);
		expect(csp).not.toMatch(/script-src[^;]*unsafe-(inline|eval)/);
		expect(directive('frame-ancestors')).toBe("frame-ancestors 'none'");
		expect(directive('object-src')).toBe("object-src 'none'");
		// Every inline script of the page carries the response's nonce.
		const nonce = /'nonce-([^']+)'/.exec(directive('script-src'))![1]!;
		const html = await r.text();
		const inline = [...html.matchAll(/<script(?![^>]*\bsrc=)([^>]*)>/g)];
		expect(inline.length).toBeGreaterThan(0);
		for (const [, attrs] of inline) expect(attrs).toContain(`nonce="${nonce}"`);
		expect(r.headers.get('x-content-type-options')).toBe('nosniff');
		expect(r.headers.get('referrer-policy')).toBe('same-origin');
		expect(r.headers.get('x-frame-options')).toBe('DENY');
		expect(r.headers.get('strict-transport-security')).toBeNull();
	});

	it('the session cookie is HttpOnly and SameSite=Lax; over HTTPS also Secure, with HSTS', async () => {
		const plain = await fetch(`${app.origin}/auth/callback/credentials`, {
			method: 'POST',
			redirect: 'manual',
			headers: { origin: app.origin, 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ username: 'planner', password: DEMO_PASSWORD, callbackUrl: '/' })
		});
		const cookie = plain.headers.getSetCookie().find((c) => c.startsWith('authjs.session-token='))!;
		expect(cookie).toMatch(/; HttpOnly/i);
		expect(cookie).toMatch(/; SameSite=Lax/i);
		expect(cookie).not.toMatch(/; Secure/i);

		const origin = 'https://127.0.0.1:3198';
		const tls = await fetch(`${secure.origin}/auth/callback/credentials`, {
			method: 'POST',
			redirect: 'manual',
			headers: { origin, 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ username: 'planner', password: DEMO_PASSWORD, callbackUrl: '/' })
		});
		const secureCookie = tls.headers
			.getSetCookie()
			.find((c) => c.startsWith('__Secure-authjs.session-token='))!;
		expect(secureCookie).toMatch(/; Secure/i);
		expect(secureCookie).toMatch(/; HttpOnly/i);
		expect(secureCookie).toMatch(/; SameSite=Lax/i);
		const page = await fetch(`${secure.origin}/login`);
		expect(page.headers.get('strict-transport-security')).toBe(
			'max-age=31536000; includeSubDomains'
		);
	});
});

describe('rate limits: 429 with Retry-After', () => {
	const cookies: Record<string, string> = {};
	beforeAll(async () => {
		// Two of this address's four sign-ins of the minute (the cookie test above made one).
		for (const u of ['quality', 'planner'])
			cookies[u] = (await signInOverHttp(app.origin, u, DEMO_PASSWORD)).cookie!;
	});
	const refusedShape = async (r: Response) => {
		expect(r.status).toBe(429);
		const wait = Number(r.headers.get('retry-after'));
		expect(wait).toBeGreaterThanOrEqual(1);
		expect(wait).toBeLessThanOrEqual(60);
		expect(await r.json()).toEqual({
			message: expect.stringMatching(/^Too many .+ in a minute: wait \d+ s, then try again\.$/),
			field: null
		});
	};

	it('API requests per person: the sixth in a minute is refused; another person is not', async () => {
		const get = (u: string) =>
			fetch(`${app.origin}/api/v1/queues`, { headers: { cookie: cookies[u]! } });
		for (let i = 0; i < 5; i++) expect((await get('quality')).status).toBe(200);
		await refusedShape(await get('quality'));
		expect((await get('planner')).status).toBe(200);
	});

	it('API requests per token: the fourth is refused; another token is not', async () => {
		const make = (name: string) =>
			tokens.createApiToken(people.admin!, { name, scope: 'usage:read' });
		const [a, b] = [await make('Line display A'), await make('Line display B')];
		const read = (token: string) =>
			fetch(`${app.origin}/api/v1/equipment/XV-3104/usage`, {
				headers: { authorization: `Bearer ${token}` }
			});
		for (let i = 0; i < 3; i++) expect((await read(a.token)).status).toBe(200);
		await refusedShape(await read(a.token));
		expect((await read(b.token)).status).toBe(200);
	});

	it('sign-in attempts per address: the fifth in a minute is refused, even with the right password, and audited', async () => {
		// This address signed in three times already (the cookie test, quality, planner): one more.
		expect((await signInOverHttp(app.origin, 'tech2', DEMO_PASSWORD)).cookie).toBeTruthy();
		const refused = await signInOverHttp(app.origin, 'tech2', DEMO_PASSWORD);
		expect(refused.cookie).toBeNull();
		expect(refused.location).toMatch(/code=throttled/);
		const [event] = await t.ownerSql`select new_values from audit_event
			where action = 'auth.sign_in_failed' and new_values->>'reason' = 'rate_limited'
			order by seq desc limit 1`;
		expect(event!.new_values).toMatchObject({ username: 'tech2' });
		expect(Number(event!.new_values.retryAfterSeconds)).toBeGreaterThan(0);
		// The sign-in page says how long to wait.
		const login = await fetch(refused.location!);
		expect(await login.text()).toContain('Too many sign-in attempts');
	});

	it('signatures per person: the third in a minute is refused before the password is checked, and audited', async () => {
		setEnv({ RATE_LIMIT_SIGNATURES_PER_PERSON: '2' });
		resetRateLimits();
		const what = {
			record: { type: 'rate_limit_test', id: 'r1', content: {} },
			meaning: 'performed' as const
		};
		try {
			await reauthenticate(people.tech1!, DEMO_PASSWORD, what, null);
			await reauthenticate(people.tech1!, DEMO_PASSWORD, what, null);
			const e = await reauthenticate(people.tech1!, DEMO_PASSWORD, what, null).catch((x) => x);
			expect(e).toBeInstanceOf(SignatureError);
			expect(e).toMatchObject({ status: 429, code: 'rate_limited' });
			expect(e.retryAfter).toBeGreaterThanOrEqual(1);
			// Another person signs on.
			await reauthenticate(people.tech2!, DEMO_PASSWORD, what, null);
			const [event] = await t.ownerSql`select new_values from audit_event
				where action = 'signature.refused' order by seq desc limit 1`;
			expect(event!.new_values).toMatchObject({ reason: 'rate_limited' });
		} finally {
			setEnv({ RATE_LIMIT_SIGNATURES_PER_PERSON: '1000000' });
		}
	});
});
