import {
	apiOperations,
	callerOf,
	callerWords,
	errorsOf,
	openApiDocument,
	pathOf,
	type ApiOperation
} from '$lib/server/openapi';

/**
 * The API reference page's content: the OpenAPI document (the same one GET /api/v1/openapi.json
 * serves) read back into words — each operation's parameters, body fields and answers as rows of
 * name, type, limits and description, from their JSON Schema.
 */
type Schema = {
	type?: string | string[];
	format?: string;
	enum?: unknown[];
	const?: unknown;
	default?: unknown;
	minimum?: number;
	maximum?: number;
	exclusiveMinimum?: number;
	exclusiveMaximum?: number;
	minLength?: number;
	maxLength?: number;
	minProperties?: number;
	pattern?: string;
	description?: string;
	properties?: Record<string, Schema>;
	required?: string[];
	items?: Schema;
	anyOf?: Schema[];
	$ref?: string;
};

export type FieldRow = {
	name: string;
	type: string;
	required: boolean;
	/** The object it belongs to, when it is a nested field (required within it). */
	within: string | null;
	limits: string[];
	description: string;
	depth: number;
};

const formatWords: Record<string, string> = {
	'date-time': 'date and time with its zone (RFC 3339)',
	date: 'date, YYYY-MM-DD',
	uuid: 'UUID'
};

const figure = (n: number) =>
	Number.isSafeInteger(n) || Math.abs(n) < 1e15 ? n.toLocaleString('en-GB') : String(n);

function typeOf(s: Schema): string {
	if (s.anyOf) return [...new Set(s.anyOf.map(typeOf))].join(' or ');
	if (s.$ref) return s.$ref.split('/').at(-1)!;
	const types = Array.isArray(s.type) ? s.type : s.type ? [s.type] : [];
	const words = types.map((t) => {
		if (t === 'string' && s.format) return formatWords[s.format] ?? `string (${s.format})`;
		if (t === 'array' && s.items) return `list of ${typeOf(s.items)}`;
		if (t === 'integer') return 'whole number';
		return t;
	});
	return words.join(' or ') || 'any JSON value';
}

function limitsOf(s: Schema): string[] {
	const out: string[] = [];
	if (s.enum) out.push(`one of ${s.enum.map((v) => String(v)).join(', ')}`);
	if (s.const !== undefined) out.push(`always ${String(s.const)}`);
	const low =
		s.minimum !== undefined
			? `from ${figure(s.minimum)}`
			: s.exclusiveMinimum !== undefined
				? `more than ${figure(s.exclusiveMinimum)}`
				: '';
	const high =
		s.maximum !== undefined && s.maximum < Number.MAX_SAFE_INTEGER
			? `${low ? 'to' : 'at most'} ${figure(s.maximum)}`
			: s.exclusiveMaximum !== undefined
				? `less than ${figure(s.exclusiveMaximum)}`
				: '';
	if (low || high) out.push([low, high].filter(Boolean).join(' '));
	if (s.minLength !== undefined && s.minLength > 0 && s.maxLength !== undefined)
		out.push(`${s.minLength} to ${s.maxLength} characters`);
	else if (s.maxLength !== undefined) out.push(`at most ${s.maxLength} characters`);
	else if (s.minLength) out.push(`at least ${s.minLength} characters`);
	// A format says it in words; zod's own pattern for it would only repeat it.
	if (s.pattern && !s.format) out.push(`matches ${s.pattern}`);
	if (s.default !== undefined) out.push(`default ${JSON.stringify(s.default)}`);
	return out;
}

/** An object schema's fields, nested ones under their parent's name (sipCycle.startedAt). */
export function fieldRows(schema: Schema, prefix = '', depth = 0, maxDepth = 3): FieldRow[] {
	const rows: FieldRow[] = [];
	const shapes = schema.anyOf ?? [schema];
	const seen = new Set<string>();
	for (const shape of shapes)
		for (const [key, s] of Object.entries(shape.properties ?? {})) {
			const name = prefix ? `${prefix}.${key}` : key;
			if (seen.has(name)) continue;
			seen.add(name);
			rows.push({
				name,
				type: typeOf(s),
				required: shape.required?.includes(key) ?? false,
				within: prefix || null,
				limits: limitsOf(s),
				description: s.description ?? '',
				depth
			});
			const inner = s.type === 'array' ? s.items : s;
			if (inner && depth < maxDepth && (inner.properties || inner.anyOf?.some((a) => a.properties)))
				rows.push(
					...fieldRows(inner, s.type === 'array' ? `${name}[]` : name, depth + 1, maxDepth)
				);
		}
	return rows;
}

type Doc = ReturnType<typeof openApiDocument>;
type OperationObject = {
	parameters?: {
		name: string;
		in: string;
		required: boolean;
		description: string;
		schema: Schema;
	}[];
	requestBody?: { content: Record<string, { schema: Schema }> };
	responses: Record<
		string,
		{
			description: string;
			content?: Record<string, { schema?: Schema }>;
			headers?: Record<string, { description: string }>;
		}
	>;
};

const schemaAt = (doc: Doc, s: Schema | undefined): Schema | undefined =>
	s?.$ref ? (doc.components.schemas as Record<string, Schema>)[s.$ref.split('/').at(-1)!] : s;

/** What the page shows of one operation. */
function operationView(doc: Doc, op: ApiOperation) {
	const path = pathOf(op.route);
	const object = (doc.paths as Record<string, Record<string, OperationObject>>)[path]![op.method]!;
	const caller = callerOf(op);
	const bodySchema = schemaAt(doc, object.requestBody?.content['application/json']?.schema);
	return {
		id: op.operationId,
		method: op.method.toUpperCase(),
		path: `/api/v1${path}`,
		tag: op.tag,
		summary: op.summary,
		description: op.description,
		who: callerWords(caller),
		auth: caller.kind === 'token' ? 'token' : caller.kind === 'public' ? 'none' : 'session',
		parameters: (object.parameters ?? []).map((p) => ({
			name: p.name,
			in: p.in,
			type: typeOf(p.schema),
			required: p.required,
			within: null,
			limits: limitsOf(p.schema),
			description: p.description,
			depth: 0
		})),
		body: bodySchema
			? {
					description: op.body?.description ?? '',
					note: bodySchema.description ?? '',
					fields: fieldRows(bodySchema),
					example: op.body?.example ? JSON.stringify(op.body.example, null, 2) : null
				}
			: null,
		answers: Object.entries(op.responses).map(([status, r]) => ({
			status: Number(status),
			description: r.description,
			types: (r.content ?? []).map((c) => c.type),
			headers: Object.entries(r.headers ?? {}).map(([name, text]) => ({ name, text })),
			schema: r.content?.find((c) => c.type === 'application/json' && c.schema)?.schema ?? null,
			fields: (() => {
				const json = r.content?.find((c) => c.type === 'application/json' && c.schema);
				const s = json ? schemaAt(doc, { $ref: `#/components/schemas/${json.schema}` }) : undefined;
				return s ? fieldRows(s) : [];
			})()
		})),
		errors: errorsOf(op).map(([status, when]) => ({ status, when }))
	};
}
export type OperationView = ReturnType<typeof operationView>;

export function apiReference() {
	const doc = openApiDocument();
	const errorShape = fieldRows(doc.components.schemas.Error as Schema);
	return {
		title: doc.info.title,
		version: doc.info.version,
		intro: doc.info.description,
		errorShape,
		operations: apiOperations.map((op) => operationView(doc, op))
	};
}
