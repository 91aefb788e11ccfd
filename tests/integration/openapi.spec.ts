import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { Validator } from '@seriousme/openapi-schema-validator';
import Ajv2020 from 'ajv/dist/2020.js';
import addFormats from 'ajv-formats';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { routeAccess } from '../../src/lib/access';
import * as tokens from '../../src/lib/server/api-tokens';
import { checkpointNow } from '../../src/lib/server/audit/checkpoints';
import type { User } from '../../src/lib/server/auth/guard';
import { seedDemoMasterData } from '../../src/lib/server/db/demo/index';
import { DEMO_PASSWORD, seedDemoAccounts, seedDemoPlant } from '../../src/lib/server/db/seed';
import {
	apiOperations,
	callerOf,
	componentSchemas,
	openApiDocument,
	pathOf,
	type SchemaName
} from '../../src/lib/server/openapi';
import { usageReportSchema } from '../../src/lib/server/plant-usage';
import { appDatabase } from './helpers/app-database';
import { serveBuiltApp, signInOverHttp } from './helpers/served-app';

// The API description (issue 9/10 item 5): GET /api/v1/openapi.json is a valid OpenAPI 3.1.0
// document (OpenAPI Specification 3.1.0, checked against the OpenAPI Initiative's JSON Schema of
// 3.1 by @seriousme/openapi-schema-validator), it documents exactly the route files of /api/v1,
// its schemas (JSON Schema draft 2020-12, made by zod's z.toJSONSchema) judge bodies as the zod
// schemas do and describe the real answers, and every API error has one shape,
// {"message", "field"} (REQUIREMENTS AC1 for who may call what; AT1, AT4: no edit or delete; CS-API1, CS-API2).
let t: Awaited<ReturnType<typeof appDatabase>>;
let app: Awaited<ReturnType<typeof serveBuiltApp>>;
const cookies: Record<string, string> = {};
let token = '';

const ajv = new Ajv2020({ strict: false, allErrors: true });
addFormats(ajv);
const schemas = componentSchemas();
const validatorOf = (name: SchemaName) => ajv.compile(schemas[name]);

beforeAll(async () => {
	t = await appDatabase();
	await seedDemoPlant(t.owner);
	await seedDemoAccounts(t.owner);
	await seedDemoMasterData(DEMO_PASSWORD);
	const [a] = await t.ownerSql`select id, username, full_name, email, roles from accounts
		where username = 'admin'`;
	const admin: User = {
		id: a!.id,
		username: a!.username,
		name: a!.full_name,
		email: a!.email,
		roles: a!.roles,
		mustChangePassword: false
	};
	({ token } = await tokens.createApiToken(admin, {
		name: 'Line 4 control system',
		scope: 'usage'
	}));
	await checkpointNow('release');
	app = await serveBuiltApp(t.appUrl, 3193);
	for (const username of ['inspector', 'quality', 'tech1', 'admin']) {
		const signedIn = await signInOverHttp(app.origin, username, DEMO_PASSWORD);
		expect(signedIn.cookie, username).toBeTruthy();
		cookies[username] = signedIn.cookie!;
	}
});
afterAll(async () => {
	await app?.stop();
	await t?.drop();
});

const get = (path: string, who?: string, headers: Record<string, string> = {}) =>
	fetch(`${app.origin}${path}`, {
		redirect: 'manual',
		headers: { ...(who ? { cookie: cookies[who]! } : {}), ...headers }
	});
const postUsage = (tag: string, body: string, bearer: string | null = token, extra = {}) =>
	fetch(`${app.origin}/api/v1/equipment/${tag}/usage`, {
		method: 'POST',
		headers: {
			'content-type': 'application/json',
			...(bearer ? { authorization: `Bearer ${bearer}` } : {}),
			...extra
		},
		body
	});

/** Every `METHOD route-id` that a +server.ts under src/routes/api/v1 exports. */
function routeTree() {
	const root = new URL('../../src/routes', import.meta.url).pathname;
	const files = (dir: string): string[] =>
		readdirSync(dir).flatMap((f) =>
			statSync(join(dir, f)).isDirectory() ? files(join(dir, f)) : [join(dir, f)]
		);
	const found: string[] = [];
	for (const file of files(join(root, 'api/v1')).filter((f) => f.endsWith('+server.ts'))) {
		const route = '/' + relative(root, join(file, '..')).split(sep).join('/');
		const text = readFileSync(file, 'utf8');
		const methods = [
			...text.matchAll(
				/export\s+(?:const|(?:async\s+)?function)\s+(GET|POST|PUT|PATCH|DELETE|OPTIONS|fallback)\b/g
			)
		].map((m) => m[1]!);
		expect(methods.length, `${route} exports a handler`).toBeGreaterThan(0);
		for (const method of methods) found.push(`${method} ${route}`);
	}
	return found.sort();
}

describe('the OpenAPI document', () => {
	it('is served to a signed-in person as JSON, and refused to anyone else (401)', async () => {
		const anonymous = await get('/api/v1/openapi.json');
		expect(anonymous.status).toBe(401);
		const served = await get('/api/v1/openapi.json', 'tech1');
		expect(served.status).toBe(200);
		expect(served.headers.get('content-type')).toContain('application/json');
		expect(await served.json()).toEqual(JSON.parse(JSON.stringify(openApiDocument())));
	});

	it('is valid OpenAPI 3.1.0 (OpenAPI Specification 3.1.0; the OAI schema of 3.1, via @seriousme/openapi-schema-validator)', async () => {
		const doc = await (await get('/api/v1/openapi.json', 'inspector')).json();
		expect(doc.openapi).toBe('3.1.0');
		const validator = new Validator();
		const result = await validator.validate(doc);
		expect(result.errors ?? []).toEqual([]);
		expect(result.valid).toBe(true);
		expect(validator.version).toBe('3.1');
		// Servers relative to the app's own origin (Server Object: "relative to the location where
		// the OpenAPI document is being served").
		expect(doc.servers).toEqual([{ url: '/api/v1', description: expect.any(String) }]);
		// Every $ref names a component that exists (Reference Object).
		const refs = JSON.stringify(doc).match(/"\$ref":"[^"]+"/g) ?? [];
		expect(refs.length).toBeGreaterThan(10);
		for (const ref of new Set(refs)) {
			const name = /#\/components\/schemas\/(\w+)/.exec(ref)?.[1];
			expect(name && doc.components.schemas[name], ref).toBeTruthy();
		}
		// operationId is unique among all operations (Operation Object).
		const ids = apiOperations.map((o) => o.operationId);
		expect(new Set(ids).size).toBe(ids.length);
	});

	it('documents every route file of /api/v1, and only routes that exist (a new route without an entry fails here)', () => {
		const documented = apiOperations.map((o) => `${o.method.toUpperCase()} ${o.route}`).sort();
		expect(documented).toEqual(routeTree());
		// Path templating (OpenAPI 3.1.0 "Path Templating"): {tag} for [tag], a parameter each.
		for (const op of apiOperations) {
			const names = [...pathOf(op.route).matchAll(/\{(\w+)\}/g)].map((m) => m[1]);
			expect(Object.keys(op.pathParameters ?? {}).sort(), op.operationId).toEqual(names.sort());
		}
	});

	it('offers no edit or delete of records and no way to switch the trail off (AT1, AT4)', () => {
		const doc = openApiDocument();
		for (const item of Object.values(doc.paths))
			for (const method of Object.keys(item)) expect(['get', 'post'], method).toContain(method);
		expect(apiOperations.filter((o) => o.method === 'post').map((o) => o.route)).toEqual([
			'/api/v1/equipment/[tag]/usage'
		]);
	});

	it('says who may call each operation as its rule in $lib/access does (AC1; Security Requirement Object)', () => {
		const doc = openApiDocument() as unknown as {
			paths: Record<string, Record<string, { security?: Record<string, string[]>[] }>>;
		};
		for (const op of apiOperations) {
			const rule = routeAccess[op.route];
			const security = doc.paths[pathOf(op.route)]![op.method]!.security;
			if (rule === 'public') expect(security, op.operationId).toBeUndefined();
			else if (rule === 'signed-in') expect(security, op.operationId).toEqual([{ session: [] }]);
			else if (typeof rule === 'string') {
				expect(rule.startsWith('token:'), op.operationId).toBe(true);
				const caller = callerOf(op);
				expect(security, op.operationId).toEqual([
					{ apiToken: [caller.kind === 'token' ? caller.scope : '?'] }
				]);
			} else expect(security, op.operationId).toEqual([{ session: [...rule] }]);
		}
	});

	it('describes every parameter and body field in words (the reference page shows them)', () => {
		const doc = openApiDocument() as unknown as {
			paths: Record<
				string,
				Record<string, { parameters?: { name: string; description: string }[] }>
			>;
		};
		for (const item of Object.values(doc.paths))
			for (const op of Object.values(item))
				for (const p of op.parameters ?? [])
					expect(p.description.length, p.name).toBeGreaterThan(10);
		const body = schemas.UsageReport as {
			description?: string;
			properties: Record<
				string,
				{ description?: string; properties?: Record<string, { description?: string }> }
			>;
		};
		expect(body.description).toBeTruthy();
		for (const [name, field] of Object.entries(body.properties)) {
			expect(field.description, name).toBeTruthy();
			for (const [inner, f] of Object.entries(field.properties ?? {}))
				expect(f.description, `${name}.${inner}`).toBeTruthy();
		}
	});
});

describe('the usage report schema of the document judges bodies as usageReportSchema does', () => {
	const validate = validatorOf('UsageReport');
	const cycle = {
		startedAt: '2026-12-01T06:00:00Z',
		endedAt: '2026-12-01T06:45:00Z',
		peakTemperatureC: 121.1,
		absolutePressureBar: 2.05685,
		holdMinutes: 20
	};
	const hours = { hours: 7.5, until: '2026-12-01T14:00:00Z' };
	// Saturated steam 121.1 °C ↔ 2.05685 bar abs: shared/CHECK-VALUES.md (IAPWS-IF97 region 4).
	const accepted: [string, unknown][] = [
		['a cycle', { sipCycle: cycle }],
		['hours', { operatingHours: hours }],
		['both', { sipCycle: cycle, operatingHours: hours }],
		['a count of 100', { sipCycle: { ...cycle, count: 100 } }],
		[
			'a zone offset (RFC 3339 §5.6)',
			{ sipCycle: { ...cycle, startedAt: '2026-12-01T07:00:00+01:00' } }
		],
		['fractions of a second', { sipCycle: { ...cycle, endedAt: '2026-12-01T06:45:00.250Z' } }],
		[
			'the limits themselves',
			{ sipCycle: { ...cycle, peakTemperatureC: 200, holdMinutes: 0, absolutePressureBar: 0.01 } }
		],
		['the example of the document', apiOperations.find((o) => o.body)!.body!.example]
	];
	const refused: [string, unknown][] = [
		['nothing reported', {}],
		['a missing field', { sipCycle: { ...cycle, holdMinutes: undefined } }],
		['an unknown field', { sipCycle: cycle, colour: 'red' }],
		['an unknown field in the cycle', { sipCycle: { ...cycle, operator: 'x' } }],
		['a count of 0', { sipCycle: { ...cycle, count: 0 } }],
		['a count of 1.5', { sipCycle: { ...cycle, count: 1.5 } }],
		['a count of 101', { sipCycle: { ...cycle, count: 101 } }],
		['a temperature above 200 °C', { sipCycle: { ...cycle, peakTemperatureC: 200.5 } }],
		['a temperature as text', { sipCycle: { ...cycle, peakTemperatureC: '121' } }],
		['no pressure', { sipCycle: { ...cycle, absolutePressureBar: 0 } }],
		['a time without its zone', { sipCycle: { ...cycle, startedAt: '2026-12-01T06:00:00' } }],
		['a date without a time', { sipCycle: { ...cycle, startedAt: '2026-12-01' } }],
		['no seconds', { sipCycle: { ...cycle, startedAt: '2026-12-01T06:00Z' } }],
		['a 30th of February', { operatingHours: { ...hours, until: '2026-02-30T14:00:00Z' } }],
		['zero hours', { operatingHours: { ...hours, hours: 0 } }],
		['a word for a time', { operatingHours: { ...hours, until: 'yesterday' } }],
		['a null cycle', { sipCycle: null }],
		['null', null],
		['a list', [cycle]],
		['text', 'sipCycle']
	];
	const clean = (v: unknown) => JSON.parse(JSON.stringify(v ?? null));

	it.each(accepted)('accepts %s', (_, body) => {
		expect(usageReportSchema.safeParse(clean(body)).success).toBe(true);
		expect(validate(clean(body)), JSON.stringify(validate.errors)).toBe(true);
	});
	it.each(refused)('refuses %s', (_, body) => {
		expect(usageReportSchema.safeParse(clean(body)).success).toBe(false);
		expect(validate(clean(body))).toBe(false);
	});
	it('differs only where JSON Schema cannot compare two values: endedAt after startedAt (said in its description)', () => {
		const backwards = { sipCycle: { ...cycle, endedAt: '2026-12-01T05:00:00Z' } };
		expect(usageReportSchema.safeParse(backwards).success).toBe(false);
		expect(validate(backwards)).toBe(true);
		const ended = (
			schemas.UsageReport as {
				properties: { sipCycle: { properties: { endedAt: { description: string } } } };
			}
		).properties.sipCycle.properties.endedAt;
		expect(ended.description).toMatch(/after startedAt/);
	});
});

describe('the real answers are as documented', () => {
	const cases: [string, string, SchemaName][] = [
		['/api/v1/health', '', 'Health'],
		['/api/v1/queues', 'quality', 'Queues'],
		['/api/v1/audit?limit=20', 'inspector', 'AuditPage'],
		['/api/v1/audit/verify', 'inspector', 'Verification'],
		['/api/v1/audit/checkpoints', 'inspector', 'Checkpoints'],
		['/api/v1/audit/proof?seq=1&treeSize=CHECKPOINT', 'inspector', 'Proof'],
		['/api/v1/access-review', 'quality', 'AccessReview'],
		['/api/v1/access-review?table=changes', 'quality', 'AccessReview']
	];
	it.each(cases)('GET %s answers its schema (%s)', async (path, who, schema) => {
		let url = path;
		if (path.includes('CHECKPOINT')) {
			const [{ n }] =
				(await t.ownerSql`select max(tree_size)::int as n from audit_checkpoints`) as unknown as [
					{ n: number }
				];
			url = path.replace('CHECKPOINT', String(n));
		}
		const response = await get(url, who || undefined);
		expect(response.status, url).toBe(200);
		const validate = validatorOf(schema);
		const body = await response.json();
		expect(validate(body), JSON.stringify(validate.errors?.slice(0, 3))).toBe(true);
	});

	it('the verification stream is JSON Lines of VerificationLine', async () => {
		const text = await (await get('/api/v1/audit/verify/stream', 'inspector')).text();
		const validate = validatorOf('VerificationLine');
		const lines = text
			.trimEnd()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(lines.at(-1)).toMatchObject({ done: true, ok: true });
		for (const line of lines) expect(validate(line), JSON.stringify(line)).toBe(true);
	});

	it('a usage report answers UsageAnswer', async () => {
		const response = await postUsage(
			'XV-3104',
			JSON.stringify({
				sipCycle: {
					startedAt: '2026-11-30T06:00:00Z',
					endedAt: '2026-11-30T06:45:00Z',
					peakTemperatureC: 121.1,
					absolutePressureBar: 2.05685,
					holdMinutes: 20
				}
			})
		);
		expect(response.status).toBe(200);
		const validate = validatorOf('UsageAnswer');
		expect(validate(await response.json()), JSON.stringify(validate.errors)).toBe(true);
	});
});

describe('every API error has one shape: {"message", "field"} (the Error schema)', () => {
	const isError = validatorOf('Error');
	/** SvelteKit's and the old fallback's words, which tell nobody what to do. */
	const vague =
		/^(Not found|The request was refused|Something went wrong on our side|Internal Error|Method Not Allowed)\.?$/;

	async function expectShape(
		response: Response,
		status: number,
		field: string | null,
		where: string
	) {
		expect(response.status, where).toBe(status);
		expect(response.headers.get('content-type'), where).toContain('application/json');
		const body = await response.json();
		expect(isError(body), `${where}: ${JSON.stringify(body)}`).toBe(true);
		expect(Object.keys(body).sort(), where).toEqual(
			status >= 500 ? ['errorId', 'field', 'message'] : ['field', 'message']
		);
		expect(body.field, where).toBe(field);
		expect(body.message, where).not.toMatch(vague);
		expect(body.message.length, where).toBeGreaterThan(10);
		return body as { message: string; field: string | null; errorId?: string };
	}

	it('400: a query or body at fault names its field', async () => {
		await expectShape(await get('/api/v1/audit?limit=0', 'inspector'), 400, 'limit', 'audit limit');
		await expectShape(
			await get('/api/v1/audit?colour=red', 'inspector'),
			400,
			'colour',
			'audit unknown'
		);
		await expectShape(
			await get('/api/v1/audit/export?format=xml', 'inspector'),
			400,
			'format',
			'export'
		);
		await expectShape(
			await get('/api/v1/access-review?from=yesterday', 'quality'),
			400,
			'from',
			'review'
		);
		await expectShape(
			await get('/api/v1/access-review?from=2026-12-01&from=2026-12-02', 'quality'),
			400,
			'from',
			'review twice'
		);
		await expectShape(
			await get('/api/v1/audit/proof?seq=x&treeSize=1', 'inspector'),
			400,
			'seq',
			'proof'
		);
		await expectShape(
			await get('/api/v1/audit/proof?seq=1', 'inspector'),
			400,
			'treeSize',
			'proof pair'
		);
		await expectShape(await get('/api/v1/audit/proof', 'inspector'), 400, null, 'proof none');
		await expectShape(await postUsage('XV-3104', '{not json'), 400, null, 'usage not JSON');
		await expectShape(
			await postUsage('XV-3104', JSON.stringify({ sipCycle: { holdMinutes: 5 } })),
			400,
			'sipCycle.startedAt',
			'usage field'
		);
	});

	it('401: not signed in, or no token', async () => {
		const body = await expectShape(await get('/api/v1/audit'), 401, null, 'anonymous audit');
		expect(body.message).toMatch(/Sign in/);
		const noToken = await expectShape(
			await postUsage('XV-3104', '{}', null),
			401,
			null,
			'no token'
		);
		expect(noToken.message).toMatch(/Bearer/);
		await expectShape(
			await postUsage('XV-3104', '{}', 'cs_usage_guess'),
			401,
			null,
			'unknown token'
		);
	});

	it('403: roles that do not allow it', async () => {
		await expectShape(await get('/api/v1/audit', 'tech1'), 403, null, 'technician audit');
		await expectShape(await get('/api/v1/access-review', 'tech1'), 403, null, 'technician review');
	});

	it('404: a path no route serves, a checkpoint or a tag that does not exist', async () => {
		const body = await expectShape(
			await get('/api/v1/no-such-thing', 'inspector'),
			404,
			null,
			'no route'
		);
		expect(body.message).toMatch(/openapi\.json/);
		await expectShape(await get('/api/v2/anything'), 404, null, 'no version');
		await expectShape(
			await get('/api/v1/audit/proof?seq=1&treeSize=999999', 'inspector'),
			404,
			'treeSize',
			'proof'
		);
		await expectShape(
			await postUsage(
				'NO-SUCH-TAG',
				JSON.stringify({ operatingHours: { hours: 1, until: '2026-12-01T00:00:00Z' } })
			),
			404,
			'tag',
			'tag'
		);
	});

	it('405: a method the route does not take says which it does', async () => {
		const response = await fetch(`${app.origin}/api/v1/audit`, {
			method: 'POST',
			headers: {
				cookie: cookies.inspector!,
				origin: app.origin,
				'content-type': 'application/json'
			},
			body: '{}'
		});
		const body = await expectShape(response, 405, null, 'POST audit');
		expect(body.message).toMatch(/GET/);
		await expectShape(
			await fetch(`${app.origin}/api/v1/health`, { method: 'DELETE' }),
			405,
			null,
			'DELETE health'
		);
	});

	it('413: a body over 1 MB is refused before it is read', async () => {
		const big = await postUsage('XV-3104', JSON.stringify({ note: 'x'.repeat(1024 * 1024 + 10) }));
		await expectShape(big, 413, null, 'big usage');
	});

	it('500: a failure of the server says what to do and gives the id to quote, never a stack', async () => {
		await t.ownerSql`revoke select on audit_checkpoints from countersign_app`;
		try {
			for (const accept of ['application/json', 'text/html', '*/*']) {
				const body = await expectShape(
					await get('/api/v1/audit/checkpoints', 'inspector', { accept }),
					500,
					null,
					`checkpoints (${accept})`
				);
				expect(body.message).toContain(body.errorId!);
				expect(body.message).not.toMatch(/permission|audit_checkpoints|at \w+ \(/);
			}
		} finally {
			await t.ownerSql`grant select on audit_checkpoints to countersign_app`;
		}
		expect((await get('/api/v1/audit/checkpoints', 'inspector')).status).toBe(200);
	});
});
