import { eq } from 'drizzle-orm';
import { createHash, randomBytes, randomUUID } from 'node:crypto';
import type { User } from './auth/guard';
import { recordEventNow } from './audit/now';
import { db } from './db/index';
import { apiTokenRevocations, apiTokens } from './db/schema/index';
import { appendRecordEvent, personOf, RecordError, refuse } from './records';

/**
 * API tokens for the plant's systems (9/10 item 2). An Administrator creates one for a scope and
 * sees it once; the database keeps only its SHA-256. A request names it as
 * `Authorization: Bearer <token>`; the guard checks it before anything else (hooks.server.ts).
 */
export const tokenScopes = ['usage', 'usage:read'] as const;
export type TokenScope = (typeof tokenScopes)[number];
/** What each scope lets a plant system do, in the words of lists and refusals. */
export const tokenScopeWords: Record<TokenScope, string> = {
	usage: 'report usage (SIP cycles, operating hours)',
	'usage:read': 'read usage (counters and SIP cycles)'
};
/** The scope a usage API request needs: reading (GET, HEAD) or reporting (anything else). */
export const scopeForMethod = (method: string): TokenScope =>
	method === 'GET' || method === 'HEAD' ? 'usage:read' : 'usage';
export type TokenActor = { kind: 'token'; id: string; name: string };

const hashOf = (token: string) => createHash('sha256').update(token, 'utf8').digest('hex');

async function mustAdminister(admin: User, what: string) {
	if (!admin.roles.includes('administrator'))
		await refuse(personOf(admin), `Only an administrator may ${what}.`, { what });
}

/** A new token: shown once to the administrator; stored as its hash, its first characters kept. */
export async function createApiToken(
	admin: User,
	input: { name: string; scope: TokenScope },
	clientAddress: string | null = null
) {
	await mustAdminister(admin, 'create API tokens');
	const name = input.name.trim();
	if (name.length < 3 || name.length > 80)
		throw new RecordError(
			'Name the token by the system that uses it (3 to 80 characters).',
			'name'
		);
	if (!tokenScopes.includes(input.scope)) throw new RecordError('Unknown scope.', 'scope');
	const token = `cs_${input.scope.replace(':', '-')}_${randomBytes(32).toString('base64url')}`;
	const id = randomUUID();
	const prefix = token.slice(0, input.scope === 'usage' ? 14 : 19);
	await db().transaction(async (tx) => {
		const rec = await appendRecordEvent(tx, personOf(admin), {
			action: 'api_token.create',
			entityType: 'api_token',
			entityId: id,
			// Never the token itself: its name, scope and first characters.
			newValues: { name, scope: input.scope, prefix },
			clientAddress
		});
		await tx
			.insert(apiTokens)
			.values({ id, name, scope: input.scope, tokenHash: hashOf(token), prefix, ...rec });
	});
	return { id, token, prefix };
}

/** Revokes a token for good, with the reason. */
export async function revokeApiToken(
	admin: User,
	id: string,
	reason: string,
	clientAddress: string | null = null
) {
	await mustAdminister(admin, 'revoke API tokens');
	if (!reason.trim()) throw new RecordError('Give the reason for revoking the token.', 'reason');
	await db().transaction(async (tx) => {
		const [token] = await tx.select().from(apiTokens).where(eq(apiTokens.id, id));
		if (!token) throw new RecordError('There is no such token.', undefined, 404);
		const [done] = await tx
			.select()
			.from(apiTokenRevocations)
			.where(eq(apiTokenRevocations.tokenId, id));
		if (done) throw new RecordError('This token is already revoked.', undefined, 409);
		const rec = await appendRecordEvent(tx, personOf(admin), {
			action: 'api_token.revoke',
			entityType: 'api_token',
			entityId: id,
			newValues: { revoked: true, name: token.name, prefix: token.prefix },
			reason,
			clientAddress
		});
		await tx.insert(apiTokenRevocations).values({ tokenId: id, reason, ...rec });
	});
}

export type TokenCheck =
	| { ok: true; actor: TokenActor; scope: TokenScope }
	| { ok: false; status: 401 | 403; message: string; reason: string; tokenId: string | null };

/**
 * The bearer token of a request checked for a scope: a missing, unknown or revoked token is 401,
 * a token of another scope 403. Every refusal is an audit event (AT7), without the token.
 */
export async function checkBearer(
	authorization: string | null,
	scope: TokenScope,
	where: { method: string; path: string; clientAddress: string | null }
): Promise<TokenCheck> {
	const refused = async (
		status: 401 | 403,
		message: string,
		reason: string,
		token: { id: string; name: string } | null
	): Promise<TokenCheck> => {
		await recordEventNow({
			actor: token ? { kind: 'token', id: token.id, name: token.name } : { kind: 'anonymous' },
			action: 'api_token.refused',
			entityType: 'route',
			entityId: where.path.slice(0, 200),
			newValues: { method: where.method, reason, scope },
			clientAddress: where.clientAddress
		});
		return { ok: false, status, message, reason, tokenId: token?.id ?? null };
	};
	const m = /^Bearer ([A-Za-z0-9_-]{1,200})$/.exec(authorization?.trim() ?? '');
	if (!m)
		return refused(401, 'Send the API token as "Authorization: Bearer <token>".', 'missing', null);
	const [row] = await db()
		.select({
			id: apiTokens.id,
			name: apiTokens.name,
			scope: apiTokens.scope,
			revoked: apiTokenRevocations.tokenId
		})
		.from(apiTokens)
		.leftJoin(apiTokenRevocations, eq(apiTokenRevocations.tokenId, apiTokens.id))
		.where(eq(apiTokens.tokenHash, hashOf(m[1]!)));
	if (!row) return refused(401, 'This API token is not known.', 'unknown', null);
	if (row.revoked) return refused(401, 'This API token has been revoked.', 'revoked', row);
	if (row.scope !== scope)
		return refused(
			403,
			`This API token may ${tokenScopeWords[row.scope as TokenScope] ?? row.scope}, not ${tokenScopeWords[scope]}: use a token of scope ${scope}.`,
			'scope',
			row
		);
	return { ok: true, actor: { kind: 'token', id: row.id, name: row.name }, scope };
}

/** Every token with who made it, when, and whether (and why) it was revoked; never the token. */
export async function listApiTokens() {
	const rows = await db()
		.select({
			id: apiTokens.id,
			name: apiTokens.name,
			scope: apiTokens.scope,
			prefix: apiTokens.prefix,
			createdBy: apiTokens.recordedByName,
			createdAt: apiTokens.recordedAt,
			revokedAt: apiTokenRevocations.recordedAt,
			revokedBy: apiTokenRevocations.recordedByName,
			revokeReason: apiTokenRevocations.reason
		})
		.from(apiTokens)
		.leftJoin(apiTokenRevocations, eq(apiTokenRevocations.tokenId, apiTokens.id))
		.orderBy(apiTokens.recordedAt);
	return rows.map((r) => ({
		...r,
		createdAt: r.createdAt.toISOString(),
		revokedAt: r.revokedAt?.toISOString() ?? null
	}));
}
