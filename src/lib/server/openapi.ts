import { z } from 'zod';
import { routeAccess, type Access } from '$lib/access';
import { roleLabels, type Role } from '$lib/roles';
import { accessReviewQuerySchema } from './access-review';
import type { ApiErrorStatus } from './api-errors';
import * as shapes from './api-schemas';
import { auditFilterNames, auditQuerySchema } from './audit/browse';
import { usageReportSchema } from './plant-usage';

/**
 * The API description (issue 9/10 item 5): `apiOperations` below is the one list of what /api/v1
 * serves — every method of every route file under src/routes/api/v1, which
 * tests/integration/openapi.spec.ts compares with the route tree — and `openApiDocument()`
 * builds the OpenAPI 3.1.0 document from it (GET /api/v1/openapi.json; the API reference page).
 * Request bodies, query parameters and answers are JSON Schema (draft 2020-12, the dialect of
 * OpenAPI 3.1) made from the zod schemas with zod's own `z.toJSONSchema`; who may call an
 * operation comes from $lib/access.
 *
 * Adding a route: write the route, give it its rule in $lib/access, then add one entry here
 * (route, method, summary, parameters, body, answers, errors). The test fails until you do.
 */

/** The components/schemas of the document, each a zod schema: `io` is the side it describes. */
const components = {
	Error: { schema: shapes.errorSchema, io: 'output' },
	UsageReport: { schema: usageReportSchema, io: 'input' },
	UsageAnswer: { schema: shapes.usageAnswerSchema, io: 'output' },
	UsageReading: { schema: shapes.usageReadingSchema, io: 'output' },
	Health: { schema: shapes.healthSchema, io: 'output' },
	Liveness: { schema: shapes.livenessSchema, io: 'output' },
	Queues: { schema: shapes.queuesSchema, io: 'output' },
	AuditPage: { schema: shapes.auditPageSchema, io: 'output' },
	Verification: { schema: shapes.verificationSchema, io: 'output' },
	VerificationLine: { schema: shapes.verificationLineSchema, io: 'output' },
	Checkpoints: { schema: shapes.checkpointsSchema, io: 'output' },
	Proof: { schema: shapes.proofSchema, io: 'output' },
	AccessReview: { schema: shapes.accessReviewSchema, io: 'output' }
} as const satisfies Record<string, { schema: z.ZodType; io: 'input' | 'output' }>;
export type SchemaName = keyof typeof components;

/**
 * What the zod schemas cannot carry into JSON Schema themselves: descriptions of the usage
 * report's fields (usageReportSchema has none of its own; one given there with `.meta()` wins)
 * and its two refinements, which JSON Schema states differently or only in words.
 */
const notes: Partial<Record<SchemaName, Record<string, string>>> = {
	UsageReport: {
		'': 'A usage report from the plant: a SIP cycle, operating hours, or both (at least one). Unknown fields are refused.',
		sipCycle:
			'One steam-in-place cycle. Recorded once per equipment and start: the same start sent again is answered with the cycle stored before and counted once.',
		'sipCycle.startedAt': 'When the cycle started: RFC 3339 date and time with its zone.',
		'sipCycle.endedAt': 'When it ended: after startedAt (checked by the server).',
		'sipCycle.count': 'How many cycles this report stands for.',
		'sipCycle.peakTemperatureC':
			'The peak temperature, °C. Compared with saturated steam at absolutePressureBar (IAPWS-IF97 region 4); outside the tolerance the cycle is flagged for Quality.',
		'sipCycle.absolutePressureBar': 'The absolute pressure at the peak, bar (not gauge).',
		'sipCycle.holdMinutes': 'Minutes held at sterilising temperature.',
		operatingHours: 'Operating hours run since the last report.',
		'operatingHours.hours': 'The hours run, h.',
		'operatingHours.until':
			'The end of the period they were run in: RFC 3339 date and time with its zone.'
	}
};
/** JSON Schema for the refinements (added to the generated schema; the test compares them with zod). */
const additions: Partial<Record<SchemaName, Record<string, unknown>>> = {
	UsageReport: { minProperties: 1 }
};

type JsonSchema = Record<string, unknown> & {
	properties?: Record<string, JsonSchema>;
	required?: string[];
	description?: string;
};

/** A zod schema as JSON Schema draft 2020-12 (what OpenAPI 3.1 Schema Objects are), without $schema. */
export function jsonSchemaOf(schema: z.ZodType, io: 'input' | 'output'): JsonSchema {
	const out = z.toJSONSchema(schema, { target: 'draft-2020-12', io }) as JsonSchema;
	delete out.$schema;
	return out;
}

/** Sets the descriptions a schema lacks; a path that is not in it is a mistake here (throws). */
function describeFields(schema: JsonSchema, texts: Record<string, string>) {
	for (const [path, text] of Object.entries(texts)) {
		let at: JsonSchema | undefined = schema;
		for (const key of path ? path.split('.') : []) at = at?.properties?.[key];
		if (!at) throw new Error(`openapi.ts: ${path} is not a field of the schema it describes`);
		at.description ??= text;
	}
}

export function componentSchemas(): Record<SchemaName, JsonSchema> {
	return Object.fromEntries(
		Object.entries(components).map(([name, c]) => {
			const json = jsonSchemaOf(c.schema, c.io);
			describeFields(json, notes[name as SchemaName] ?? {});
			Object.assign(json, additions[name as SchemaName] ?? {});
			return [name, json];
		})
	) as Record<SchemaName, JsonSchema>;
}

/** The route ids of /api/v1 that serve requests (the access table's, from $lib/access). */
export type ApiRouteId = Extract<keyof typeof routeAccess, `/api/v1/${string}`>;

export type Parameter = {
	name: string;
	description: string;
	required?: boolean;
	schema: JsonSchema;
};

/** A query string described by a zod object schema: each of its keys one parameter. */
type ZodQuery = {
	schema: z.ZodObject;
	/** Only these keys (default: all of them). */
	only?: readonly string[];
	descriptions: Record<string, string>;
};

type Content = { type: string; schema?: SchemaName; description?: string };

export type ApiOperation = {
	route: ApiRouteId;
	method: 'get' | 'post';
	operationId: string;
	tag: 'Plant' | 'Audit trail' | 'Access' | 'People' | 'Service';
	summary: string;
	description: string;
	/** A token route: the scope this method needs (its rule in $lib/access says token:<scope>). */
	tokenScope?: string;
	/** One entry per [name] of the route id. */
	pathParameters?: Record<string, { description: string; schema: JsonSchema }>;
	query?: ZodQuery;
	/** Query parameters no zod schema describes (listed first). */
	moreQuery?: Parameter[];
	/** The JSON body; `example` must pass the schema (the test checks it with zod). */
	body?: { schema: SchemaName; description: string; example?: unknown };
	/** The answers that are not errors, by status. */
	responses: Record<
		number,
		{ description: string; content?: Content[]; headers?: Record<string, string> }
	>;
	/** When each error status is answered (401, 403 and 500 are added from the rule). */
	errors: Partial<Record<ApiErrorStatus, string>>;
};

const json = (schema: SchemaName): Content => ({ type: 'application/json', schema });

const auditFilterText: Record<(typeof auditFilterNames)[number], string> = {
	from: 'From this date (2026-12-01, the whole day) or date and time with its zone, UTC.',
	to: 'Up to this date (the whole day) or date and time with its zone, UTC.',
	person: 'Events of one account (its id).',
	action:
		'One action (work_order.release), or every action of a prefix ending in a dot (work_order.).',
	entityType: 'Events of one kind of record, e.g. work_order, equipment, account.',
	equipment: 'A tag: the equipment’s own events and those of its work orders.',
	workOrder: 'A work order by number or id: its events and those of its steps.',
	q: 'Free text, looked for in reasons, values and names.',
	record:
		'One record’s History: <kind>:<id>, the kind one of work_order, step, equipment, procedure_version, account (a step is step:<work order id>:<step key>).'
};

/** Every operation of /api/v1, in the order the reference shows them. */
export const apiOperations: ApiOperation[] = [
	{
		route: '/api/v1/equipment/[tag]/usage',
		method: 'post',
		operationId: 'reportUsage',
		tag: 'Plant',
		tokenScope: 'usage',
		summary: 'Report usage of a piece of equipment',
		description:
			'The plant’s control system reports steam-in-place cycles and operating hours. The token is checked first, before the path or the body is read; every use and every refusal is in the audit trail with the token as actor. The counters feed PM schedules by use.',
		pathParameters: {
			tag: {
				description: 'The equipment’s tag, e.g. XV-3104 (read in capitals).',
				schema: { type: 'string', minLength: 1, maxLength: 40 }
			}
		},
		body: {
			schema: 'UsageReport',
			description: 'A SIP cycle, operating hours, or both.',
			example: {
				sipCycle: {
					startedAt: '2026-12-01T06:00:00Z',
					endedAt: '2026-12-01T06:45:00Z',
					peakTemperatureC: 121.3,
					absolutePressureBar: 2.06,
					holdMinutes: 20
				},
				operatingHours: { hours: 7.5, until: '2026-12-01T14:00:00Z' }
			}
		},
		responses: {
			200: {
				description: 'Stored (or stored before: the same cycle is counted once).',
				content: [json('UsageAnswer')]
			}
		},
		errors: {
			400: 'The body is not JSON, or a field is missing, out of its limits or unknown: `field` names it.',
			404: 'No equipment has this tag (`field` is tag).',
			409: 'The site is not set up yet: an administrator sets it up first.'
		}
	},
	{
		route: '/api/v1/equipment/[tag]/usage',
		method: 'get',
		operationId: 'readUsage',
		tag: 'Plant',
		tokenScope: 'usage:read',
		summary: 'Read the usage of a piece of equipment',
		description:
			'A plant display reads the counters (SIP cycles, operating hours) and the latest SIP cycles, newest first. Each read is an audit event with the token as actor.',
		pathParameters: {
			tag: {
				description: 'The equipment’s tag, e.g. XV-3104 (read in capitals).',
				schema: { type: 'string', minLength: 1, maxLength: 40 }
			}
		},
		moreQuery: [
			{
				name: 'limit',
				description: 'How many of the latest SIP cycles to list.',
				schema: { type: 'integer', minimum: 1, maximum: 200, default: 20 }
			}
		],
		responses: {
			200: { description: 'The counters and the latest cycles.', content: [json('UsageReading')] }
		},
		errors: {
			400: 'limit is not a whole number from 1 to 200 (`field` is limit).',
			404: 'No equipment has this tag (`field` is tag).'
		}
	},
	{
		route: '/api/v1/queues',
		method: 'get',
		operationId: 'waitingForMe',
		tag: 'People',
		summary: 'Waiting for me',
		description:
			'What waits for the signed-in person: one queue per role they hold (steps to verify, records to review, deviations, …), as the home page shows it.',
		responses: { 200: { description: 'The person’s queues.', content: [json('Queues')] } },
		errors: {}
	},
	{
		route: '/api/v1/audit',
		method: 'get',
		operationId: 'browseAudit',
		tag: 'Audit trail',
		summary: 'One page of the audit trail',
		description:
			'Filtered and paged by a seq cursor (never by offset: a page stays the same however many events are appended meanwhile). An empty parameter means no filter.',
		query: {
			schema: auditQuerySchema,
			descriptions: {
				...auditFilterText,
				after: 'The cursor: the seq of the last event of the page before (next of the answer).',
				order: 'desc (newest first) or asc.',
				limit: 'Events per page.'
			}
		},
		responses: { 200: { description: 'One page of events.', content: [json('AuditPage')] } },
		errors: { 400: 'A filter is not valid, or unknown: `field` names it.' }
	},
	{
		route: '/api/v1/audit/export',
		method: 'get',
		operationId: 'exportAudit',
		tag: 'Audit trail',
		summary: 'Export the trail, a filtered view of it, or one record’s History',
		description:
			'Without filters: the whole trail as JSON Lines, each line the hashed fields plus prev_hash and hash, which `node scripts/verify-export.mjs FILE` checks without the server. A filtered view has gaps in the chain, so only each event’s own hash can be compared. Every export is itself an audit event, the last event it holds when the view includes it.',
		moreQuery: [
			{
				name: 'format',
				description: 'jsonl (JSON Lines, the default) or csv.',
				schema: { type: 'string', enum: ['jsonl', 'csv'], default: 'jsonl' }
			}
		],
		query: { schema: auditQuerySchema, only: auditFilterNames, descriptions: auditFilterText },
		responses: {
			200: {
				description: 'The events as a download (content-disposition: attachment).',
				content: [
					{ type: 'application/x-ndjson', description: 'One event per line (format=jsonl).' },
					{ type: 'text/csv', description: 'A header line, then one event per line (format=csv).' }
				],
				headers: {
					'x-export-events':
						'How many events the trail held up to the export’s own event (for progress).'
				}
			}
		},
		errors: {
			400: 'format is not jsonl or csv, or a filter is not valid or unknown: `field` names it.'
		}
	},
	{
		route: '/api/v1/audit/verify',
		method: 'get',
		operationId: 'verifyAudit',
		tag: 'Audit trail',
		summary: 'Verify the whole chain',
		description:
			'Recomputes every hash of the trail from the stored columns. A failed verification is itself an audit event, e-mailed to Quality and the administrators.',
		responses: {
			200: {
				description: 'The result (ok false names the first bad event).',
				content: [json('Verification')]
			}
		},
		errors: {}
	},
	{
		route: '/api/v1/audit/verify/stream',
		method: 'get',
		operationId: 'verifyAuditStream',
		tag: 'Audit trail',
		summary: 'Verify the whole chain, with progress',
		description:
			'The same verification as JSON Lines: a {checked, total} line per batch of 1,000 events, then the result with done: true (or done: true with error when it could not finish).',
		responses: {
			200: {
				description: 'JSON Lines, each line a VerificationLine.',
				content: [
					{
						type: 'application/x-ndjson',
						schema: 'VerificationLine',
						description: 'JSON Lines: progress lines, then the result.'
					}
				]
			}
		},
		errors: {}
	},
	{
		route: '/api/v1/audit/checkpoints',
		method: 'get',
		operationId: 'listCheckpoints',
		tag: 'Audit trail',
		summary: 'The trail’s checkpoints',
		description:
			'Tree heads over the trail (RFC 9162), made every 1,000 events and at each release, newest first (at most 100).',
		responses: { 200: { description: 'The checkpoints.', content: [json('Checkpoints')] } },
		errors: {}
	},
	{
		route: '/api/v1/audit/proof',
		method: 'get',
		operationId: 'auditProof',
		tag: 'Audit trail',
		summary: 'A Merkle proof against a checkpoint',
		description:
			'Either seq and treeSize (an inclusion proof: event seq is in the checkpoint of treeSize events) or first and second (a consistency proof: the checkpoint of second events extends the one of first). `node scripts/verify-export.mjs --inclusion|--consistency FILE` checks the answer.',
		moreQuery: [
			['seq', 'The event (inclusion proof), with treeSize.'],
			['treeSize', 'The checkpoint’s size in events (inclusion proof), with seq.'],
			['first', 'The smaller checkpoint’s size (consistency proof), with second.'],
			['second', 'The larger checkpoint’s size (consistency proof), with first.']
		].map(([name, description]) => ({
			name: name!,
			description: description!,
			schema: { type: 'integer', minimum: 1, maximum: Number.MAX_SAFE_INTEGER }
		})),
		responses: { 200: { description: 'The proof.', content: [json('Proof')] } },
		errors: {
			400: 'Neither pair given, one of a pair missing, or not a whole number from 1.',
			404: 'There is no such checkpoint (see GET /api/v1/audit/checkpoints).'
		}
	},
	{
		route: '/api/v1/access-review',
		method: 'get',
		operationId: 'accessReview',
		tag: 'Access',
		summary: 'The access review of a period',
		description:
			'For the periodic access recertification: every account with its roles (each since the audit event that granted it), the last sign-in and flags, and the role changes of the period. Every export is an audit event.',
		query: {
			schema: accessReviewQuerySchema,
			descriptions: {
				from: 'The first day of the period (UTC); default: 90 days up to to.',
				to: 'The last day of the period (UTC); default: today.',
				format: 'json (the default) or csv.',
				table:
					'roles (who holds which roles) or changes (role changes in the period); needed with format=csv.'
			}
		},
		responses: {
			200: {
				description: 'The review as a download (content-disposition: attachment).',
				content: [
					json('AccessReview'),
					{
						type: 'text/csv',
						description: 'One table (format=csv with table=roles or table=changes).'
					}
				]
			}
		},
		errors: {
			400: 'A parameter is not valid, given twice or unknown, csv without table, or the period starts after it ends: `field` names it.'
		}
	},
	{
		route: '/api/v1/health',
		method: 'get',
		operationId: 'health',
		tag: 'Service',
		summary: 'Liveness and readiness',
		description:
			'For load balancers and operators: whether the database, the object store and the mail server answer.',
		responses: {
			200: { description: 'Every part answers.', content: [json('Health')] },
			503: {
				description: 'A part does not answer: the body says which.',
				content: [json('Health')]
			}
		},
		errors: {}
	},
	{
		route: '/api/v1/health/live',
		method: 'get',
		operationId: 'liveness',
		tag: 'Service',
		summary: 'Liveness',
		description:
			'Whether the app server answers at all, without asking the services behind it (for an orchestrator’s restart check).',
		responses: {
			200: { description: 'The app server answers.', content: [json('Liveness')] }
		},
		errors: {}
	},
	{
		route: '/api/v1/openapi.json',
		method: 'get',
		operationId: 'openApiDocument',
		tag: 'Service',
		summary: 'This description of the API',
		description: 'The OpenAPI 3.1.0 document of /api/v1. The page API reference shows it in words.',
		responses: {
			200: {
				description: 'The OpenAPI document.',
				content: [{ type: 'application/json', description: 'An OpenAPI 3.1.0 document.' }]
			}
		},
		errors: {}
	}
];

/** The document's path for a route id: /api/v1/equipment/[tag]/usage → /equipment/{tag}/usage. */
export const pathOf = (route: string) =>
	route.replace(/^\/api\/v1/, '').replace(/\[(?:\.\.\.)?(\w+)(?:=\w+)?\]/g, '{$1}');

/** Who may call an operation, from its route's rule. */
export type Caller =
	| { kind: 'public' }
	| { kind: 'signed-in'; roles: Role[] | null }
	| { kind: 'token'; scope: string };

export function callerOf(op: ApiOperation): Caller {
	const access: Access = routeAccess[op.route];
	if (access === 'public') return { kind: 'public' };
	if (access === 'signed-in') return { kind: 'signed-in', roles: null };
	if (typeof access === 'string') return { kind: 'token', scope: op.tokenScope ?? access.slice(6) };
	return { kind: 'signed-in', roles: [...access] };
}

/** The caller in words (the reference page; each operation's description). */
export function callerWords(caller: Caller) {
	if (caller.kind === 'public') return 'Anyone: no sign-in, no token.';
	if (caller.kind === 'token') return `A plant system with an API token of scope ${caller.scope}.`;
	if (!caller.roles) return 'Any signed-in person.';
	const names = caller.roles.map((r) => roleLabels[r]);
	return `A signed-in person holding the role ${names.length > 1 ? `${names.slice(0, -1).join(', ')} or ${names.at(-1)}` : names[0]}.`;
}

const errorContent = { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } };

/** The error statuses of an operation with when each is answered: its own, then those of its rule. */
export function errorsOf(op: ApiOperation): [number, string][] {
	const caller = callerOf(op);
	const all: Partial<Record<number, string>> = { ...op.errors };
	if (caller.kind === 'token') {
		all[401] ??=
			'No token, or one that is unknown or revoked: send "Authorization: Bearer <token>".';
		all[403] ??= `The token is of another scope: use one of scope ${caller.scope}.`;
	} else if (caller.kind === 'signed-in') {
		all[401] ??= 'Not signed in: sign in first (the session cookie).';
		all[403] ??= caller.roles
			? 'Your roles do not allow this, or you must choose a new password first.'
			: 'You must choose a new password first.';
	}
	if (op.body) all[413] ??= 'The body is larger than 1 MB.';
	all[500] = 'The server failed: try again; the answer carries an errorId to quote.';
	return Object.entries(all)
		.map(([s, w]) => [Number(s), w!] as [number, string])
		.sort((a, b) => a[0] - b[0]);
}

function parametersOf(op: ApiOperation) {
	const out: Record<string, unknown>[] = [];
	for (const [name, p] of Object.entries(op.pathParameters ?? {}))
		out.push({ name, in: 'path', required: true, description: p.description, schema: p.schema });
	for (const p of op.moreQuery ?? [])
		out.push({
			name: p.name,
			in: 'query',
			required: p.required ?? false,
			description: p.description,
			schema: p.schema
		});
	if (op.query) {
		const object = jsonSchemaOf(op.query.schema, 'input');
		for (const [name, schema] of Object.entries(object.properties ?? {})) {
			if (op.query.only && !op.query.only.includes(name)) continue;
			const description = op.query.descriptions[name];
			if (!description)
				throw new Error(`openapi.ts: describe the query parameter ${name} of ${op.operationId}`);
			out.push({
				name,
				in: 'query',
				required: object.required?.includes(name) ?? false,
				description,
				schema
			});
		}
	}
	return out;
}

function operationObject(op: ApiOperation) {
	const caller = callerOf(op);
	const responses: Record<string, unknown> = {};
	for (const [status, r] of Object.entries(op.responses)) {
		const content = r.content?.length
			? Object.fromEntries(
					r.content.map((c) => [
						c.type,
						c.type === 'application/json'
							? {
									schema: c.schema
										? { $ref: `#/components/schemas/${c.schema}` }
										: { type: 'object', description: c.description }
								}
							: {
									// Text (CSV, JSON Lines): the body is a string; a JSON Lines line's schema is named.
									schema: {
										type: 'string',
										...(c.description ? { description: c.description } : {})
									},
									...(c.schema
										? { 'x-line-schema': { $ref: `#/components/schemas/${c.schema}` } }
										: {})
								}
					])
				)
			: undefined;
		const headers = r.headers
			? Object.fromEntries(
					Object.entries(r.headers).map(([h, text]) => [
						h,
						{ description: text, schema: { type: 'string' } }
					])
				)
			: undefined;
		responses[status] = {
			description: r.description,
			...(headers ? { headers } : {}),
			...(content ? { content } : {})
		};
	}
	for (const [status, when] of errorsOf(op))
		responses[String(status)] = { description: when, content: errorContent };
	const security =
		caller.kind === 'public'
			? undefined
			: caller.kind === 'token'
				? [{ apiToken: [caller.scope] }]
				: [{ session: caller.roles ?? [] }];
	const parameters = parametersOf(op);
	return {
		operationId: op.operationId,
		tags: [op.tag],
		summary: op.summary,
		description: `${op.description}\n\nWho may call it: ${callerWords(caller)}`,
		...(parameters.length ? { parameters } : {}),
		...(op.body
			? {
					requestBody: {
						required: true,
						description: op.body.description,
						content: {
							'application/json': {
								schema: { $ref: `#/components/schemas/${op.body.schema}` },
								...(op.body.example === undefined ? {} : { example: op.body.example })
							}
						}
					}
				}
			: {}),
		responses,
		...(security ? { security } : {})
	};
}

/** The OpenAPI 3.1.0 document of /api/v1 (servers relative: the app's own origin). */
export function openApiDocument() {
	const paths: Record<string, Record<string, unknown>> = {};
	for (const op of apiOperations) (paths[pathOf(op.route)] ??= {})[op.method] = operationObject(op);
	return {
		openapi: '3.1.0',
		info: {
			title: 'Countersign API',
			version: '1.0.0',
			summary: 'The JSON API of Countersign, the electronic maintenance record.',
			description:
				'Every answer is JSON (or JSON Lines and CSV for downloads). Every error has one shape, the Error schema: `{"message", "field"}`, the message saying what to do and field naming the parameter or body field at fault (or null); a failure of the server adds `errorId`. A path that no route serves answers 404 and a method a route does not take answers 405, in the same shape. People call the API with the session of their sign-in; plant systems with an API token that an administrator makes under People and access → API tokens.'
		},
		servers: [{ url: '/api/v1', description: 'This Countersign server.' }],
		tags: [
			{ name: 'Plant', description: 'What the plant’s systems report (API tokens).' },
			{ name: 'People', description: 'What the signed-in person sees.' },
			{
				name: 'Audit trail',
				description: 'The hash-chained trail: browse, export, verify, prove.'
			},
			{ name: 'Access', description: 'Access recertification.' },
			{ name: 'Service', description: 'The server itself.' }
		],
		paths,
		components: {
			schemas: componentSchemas(),
			securitySchemes: {
				session: {
					type: 'apiKey',
					in: 'cookie',
					name: 'authjs.session-token',
					description:
						'The session of a person signed in at /login (named __Secure-authjs.session-token over HTTPS). The roles listed with an operation are alternatives: any one of them is enough; none listed means any signed-in person.'
				},
				apiToken: {
					type: 'http',
					scheme: 'bearer',
					description:
						'A plant API token (Authorization: Bearer <token>), made by an administrator and shown once. Each token has one scope, listed with the operation it allows.'
				}
			}
		}
	};
}
export type OpenApiDocument = ReturnType<typeof openApiDocument>;
