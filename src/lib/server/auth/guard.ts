import { error, json, redirect, type Handle, type RequestEvent } from '@sveltejs/kit';
import { mayAccess, routeAccess, type Access } from '$lib/access';
import type { Role } from '$lib/roles';
import { checkBearer, scopeForMethod } from '../api-tokens';
import { recordEventNow } from '../audit/now';
import { log } from '../log';
import { hit, tooManyWords, type RateLimitKind } from '../rate-limit';

export type User = {
	id: string;
	username: string;
	name: string;
	email: string;
	roles: Role[];
	mustChangePassword: boolean;
};

const isApi = (event: RequestEvent) => event.url.pathname.startsWith('/api/');

/** Pages a person who must change their password may still open. */
const allowedDuringPasswordChange = new Set(['/(app)/account', '/logout', '/login']);

/** Records a refused request (REQUIREMENTS AT7: failed authorisations are events). */
async function recordDenied(event: RequestEvent, user: User, needed: Access | string) {
	await recordEventNow({
		actor: { kind: 'person', id: user.id, name: user.name, roles: user.roles },
		action: 'auth.access_denied',
		entityType: 'route',
		entityId: event.route.id,
		newValues: { method: event.request.method, path: event.url.pathname, needed },
		clientAddress: event.getClientAddress()
	});
}

/** A 429 in the API's error shape with Retry-After when `key` is over its limit; null when not. */
function rateLimited(kind: RateLimitKind, key: string, what: string, event: RequestEvent) {
	const rate = hit(kind, key);
	if (rate.ok) return null;
	if (rate.first)
		log.warn('rate limit reached', { kind, limit: rate.limit, path: event.url.pathname });
	return json(
		{ message: tooManyWords(what, rate.retryAfter), field: null },
		{ status: 429, headers: { 'retry-after': String(rate.retryAfter) } }
	);
}

/**
 * The server's guard, after Auth.js's handle: finds the signed-in person (Auth.js's jwt
 * callback checks the server-side session), then applies the route's rule from $lib/access.
 * Anonymous visitors are sent to /login from pages and get 401 JSON from the API.
 */
export const guard: Handle = async ({ event, resolve }) => {
	const routeId = event.route.id;
	if (routeId === '/api/v1/health' || routeId === '/api/v1/health/live') return resolve(event);

	// The plant API (9/10): the token first, whatever the path or the body, before any session.
	if (
		(routeId && routeAccess[routeId as keyof typeof routeAccess] === 'token:usage') ||
		event.url.pathname.startsWith('/api/v1/equipment/')
	) {
		const scope = scopeForMethod(event.request.method);
		const checked = await checkBearer(event.request.headers.get('authorization'), scope, {
			method: event.request.method,
			path: event.url.pathname,
			clientAddress: event.getClientAddress()
		});
		if (!checked.ok) return json({ message: checked.message }, { status: checked.status });
		const limited = rateLimited('api_token', checked.actor.id, 'requests with this token', event);
		if (limited) return limited;
		event.locals.token = checked.actor;
		return resolve(event);
	}

	const session = await event.locals.auth();
	const user = session?.user?.id ? (session.user as unknown as User) : null;
	event.locals.user = user;
	if (user && isApi(event)) {
		const limited = rateLimited('api_person', user.id, 'API requests from you', event);
		if (limited) return limited;
	}

	// Unknown paths fall through to the 404 page; every known route has a rule (checked by types and tests).
	const access: Access | undefined = routeId
		? routeAccess[routeId as keyof typeof routeAccess]
		: 'public';
	if (access === undefined) error(403, 'This page has no access rule.');

	if (!mayAccess(access, user?.roles, Boolean(user))) {
		if (!user) {
			if (isApi(event)) return json({ message: 'Sign in first' }, { status: 401 });
			const back = event.url.pathname + event.url.search;
			redirect(303, `/login?callbackUrl=${encodeURIComponent(back)}`);
		}
		await recordDenied(event, user, access);
		if (isApi(event))
			return json(
				{
					message: 'Your roles do not allow this: ask an administrator for a role that does.',
					field: null
				},
				{ status: 403 }
			);
		error(403, 'Your roles do not allow this page.');
	}

	if (user?.mustChangePassword && routeId && !allowedDuringPasswordChange.has(routeId)) {
		if (isApi(event)) return json({ message: 'Choose a new password first' }, { status: 403 });
		redirect(303, '/account?required=1');
	}
	return resolve(event);
};

/**
 * Inside every action and endpoint: the signed-in person, who must hold one of the roles
 * (none given: any signed-in person). Throws 401 or 403 (audited) otherwise.
 */
export async function requireRole(event: RequestEvent, ...roles: Role[]): Promise<User> {
	const user = event.locals.user;
	if (!user) error(401, 'Sign in first.');
	if (roles.length > 0 && !roles.some((role) => user.roles.includes(role))) {
		await recordDenied(event, user, roles);
		error(403, 'Your roles do not allow this.');
	}
	return user;
}
