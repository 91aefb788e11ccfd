import { z } from 'zod';
import { roles } from '$lib/roles';

/**
 * The answers of /api/v1 as zod schemas, for the OpenAPI document only (openapi.ts turns them
 * into JSON Schema with z.toJSONSchema): the routes build their answers from the domain modules'
 * types, and tests/integration/openapi.spec.ts checks real answers against these, so a change of
 * shape that is not described here fails there.
 */
const d = (description: string) => ({ description });
const instant = () => z.iso.datetime();
const day = () => z.iso.date();
const hex64 = () => z.string().regex(/^[0-9a-f]{64}$/);
const role = z.enum(roles);

export const errorSchema = z
	.strictObject({
		message: z.string().meta(d('What went wrong and what to do about it, in words for a person.')),
		field: z
			.string()
			.nullable()
			.meta(
				d(
					'The parameter or body field at fault (dotted for a nested one, e.g. sipCycle.holdMinutes); null when no one field is.'
				)
			),
		errorId: z
			.string()
			.optional()
			.meta(
				d(
					'Only when the server failed (500): quote it to support; the server log has the details under it.'
				)
			)
	})
	.meta(d('Every API error has this shape, whatever the status.'));

export const healthSchema = z
	.strictObject({
		status: z
			.enum(['ok', 'down'])
			.meta(d('ok when every part answers (HTTP 200), else down (503).')),
		db: z.string().meta(d('"ok", or what is wrong with the database in a few words.')),
		storage: z.string().meta(d('"ok", or what is wrong with the object store.')),
		mail: z.string().meta(d('"ok", or what is wrong with the mail server.'))
	})
	.meta(d('Liveness and readiness of the app and the services it needs.'));

export const livenessSchema = z
	.strictObject({ status: z.literal('ok').meta(d('Always ok: the app server answers.')) })
	.meta(d('Liveness: the app server answers.'));

const queueItem = z.strictObject({
	id: z.string(),
	title: z.string(),
	detail: z.string(),
	at: instant().optional().meta(d('When it started to wait (UTC).')),
	href: z
		.strictObject({
			route: z.string().meta(d('The page it opens, as a route id.')),
			id: z.string(),
			key: z.string().optional()
		})
		.optional()
});
export const queuesSchema = z
	.strictObject({
		queues: z.array(
			z.strictObject({
				key: z.string().meta(d('Which queue, e.g. review or deviations.')),
				title: z.string(),
				empty: z.string().meta(d('What to show when it holds nothing.')),
				items: z.array(queueItem)
			})
		)
	})
	.meta(d('"Waiting for me": the queues of the signed-in person, by their roles.'));

const auditEvent = z.strictObject({
	seq: z.number().int().min(1).meta(d('Its place in the chain, from 1.')),
	at: instant(),
	actorKind: z.string().meta(d('person, system, token or anonymous.')),
	actorId: z.string().nullable(),
	actorName: z.string(),
	actorRoles: z.array(z.string()),
	action: z.string().meta(d('What happened, e.g. work_order.release.')),
	entityType: z.string(),
	entityId: z.string().nullable(),
	newValues: z.unknown(),
	previousValues: z.unknown(),
	reason: z.string().nullable(),
	clientAddress: z.string().nullable(),
	prevHash: hex64().meta(d('SHA-256 of the event before (hex).')),
	hash: hex64().meta(d('SHA-256 of this event (hex).'))
});
export const auditPageSchema = z
	.strictObject({
		events: z.array(auditEvent),
		next: z
			.number()
			.int()
			.nullable()
			.meta(d('Pass as after= for the next page; null on the last page.'))
	})
	.meta(d('One page of the audit trail.'));

export const verificationSchema = z
	.strictObject({
		ok: z.boolean().meta(d('true when every hash and link of the chain is as stored.')),
		events: z
			.number()
			.int()
			.min(0)
			.meta(d('Events checked, up to and including the first bad one.')),
		firstBadSeq: z.number().int().nullable(),
		problem: z.string().nullable().meta(d('What is wrong at firstBadSeq, in words.'))
	})
	.meta(d('The result of recomputing the whole chain.'));

export const verificationLineSchema = z
	.union([
		z.strictObject({ checked: z.number().int(), total: z.number().int() }),
		verificationSchema.extend({ done: z.literal(true) }),
		z.strictObject({
			done: z.literal(true),
			error: z.string().meta(d('The verification could not finish: try again.'))
		})
	])
	.meta(d('One line of the JSON Lines stream: progress, then the result (or why it stopped).'));

export const checkpointsSchema = z
	.strictObject({
		checkpoints: z.array(
			z.strictObject({
				treeSize: z.number().int().min(1),
				rootHash: hex64(),
				reason: z.string().meta(d('interval (every 1,000 events) or release.')),
				createdAt: instant()
			})
		)
	})
	.meta(d('The checkpoints of the trail (RFC 9162 tree heads), newest first.'));

export const proofSchema = z
	.union([
		z.strictObject({
			kind: z.literal('inclusion'),
			seq: z.number().int(),
			eventHash: hex64(),
			treeSize: z.number().int(),
			rootHash: hex64(),
			path: z.array(hex64())
		}),
		z.strictObject({
			kind: z.literal('consistency'),
			first: z.strictObject({ treeSize: z.number().int(), rootHash: hex64() }),
			second: z.strictObject({ treeSize: z.number().int(), rootHash: hex64() }),
			path: z.array(hex64())
		})
	])
	.meta(
		d('A Merkle proof that `node scripts/verify-export.mjs --inclusion|--consistency FILE` checks.')
	);

const heldRole = z.strictObject({
	role,
	since: instant().nullable().meta(d('When the event that granted it was appended.')),
	sinceSeq: z.number().int().nullable(),
	grantedBy: z.string().nullable(),
	reason: z.string().nullable()
});
const reviewAccount = z.strictObject({
	id: z.uuid(),
	username: z.string(),
	fullName: z.string(),
	email: z.string(),
	active: z.boolean(),
	status: z.enum(['active', 'locked', 'deactivated', 'must_change_password']),
	deactivatedAt: instant().nullable(),
	deactivatedBy: z.string().nullable(),
	deactivationReason: z.string().nullable(),
	lockedAt: instant().nullable(),
	lastSignInAt: instant().nullable(),
	createdAt: instant(),
	roles: z.array(heldRole),
	flags: z.array(z.enum(['never_signed_in', 'dormant', 'locked', 'deactivated'])),
	unexplained: z.boolean().meta(d('Roles the account holds that no event in the trail granted.'))
});
const roleChange = z.strictObject({
	seq: z.number().int(),
	at: instant(),
	action: z.string(),
	kind: z.enum(['created', 'roles_changed', 'deactivated', 'locked', 'unlocked']),
	accountId: z.string(),
	username: z.string().nullable(),
	fullName: z.string().nullable(),
	added: z.array(role),
	removed: z.array(role),
	by: z.string(),
	reason: z.string().nullable()
});
export const accessReviewSchema = z
	.strictObject({
		period: z.strictObject({ from: day(), to: day() }),
		generatedAt: instant(),
		dormantDays: z.number().int(),
		accounts: z.array(reviewAccount).optional().meta(d('Left out with table=changes.')),
		changes: z.array(roleChange).optional().meta(d('Left out with table=roles.'))
	})
	.meta(d('The access review of a period: every account with its roles, and the role changes.'));

/** One stored SIP cycle, as POST and GET /api/v1/equipment/{tag}/usage answer it. */
const sipCycleAnswer = z.strictObject({
	id: z.uuid(),
	startedAt: instant(),
	endedAt: instant(),
	count: z.number().int(),
	peakTemperatureC: z.number(),
	absolutePressureBar: z.number(),
	holdMinutes: z.number(),
	saturationTemperatureC: z
		.number()
		.meta(d('Saturated steam at the absolute pressure (IAPWS-IF97 region 4), °C.')),
	steamMatches: z
		.boolean()
		.meta(d('false when the peak is outside the tolerance: the cycle is flagged for Quality.')),
	toleranceC: z.number()
});

export const usageAnswerSchema = z
	.strictObject({
		equipment: z.string().meta(d('The tag, in capitals.')),
		sipCycle: sipCycleAnswer
			.nullable()
			.meta(
				d(
					'The stored cycle (the one stored before, when this start was reported already); null without one.'
				)
			)
	})
	.meta(d('What is stored.'));

/** GET /api/v1/equipment/{tag}/usage (scope usage:read): the counters and the latest cycles. */
export const usageReadingSchema = z
	.strictObject({
		equipment: z.string().meta(d('The tag, in capitals.')),
		sipCycles: z.number().meta(d('SIP cycles counted so far.')),
		operatingHours: z.number().meta(d('Operating hours counted so far, h.')),
		latestCycles: z.array(sipCycleAnswer).meta(d('The latest SIP cycles, newest first.'))
	})
	.meta(d('The usage counters of a piece of equipment and its latest SIP cycles.'));
