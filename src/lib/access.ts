import type { RouteId } from '$app/types';
import type { Role } from './roles';

/**
 * Who may open each route: the one table the server's guard enforces (hooks.server.ts) and the
 * navigation reads. Typed over every route id, so a new route without a rule does not compile;
 * tests/unit/route-rules.spec.ts also checks the route folders against it.
 *
 * - public: anyone, signed in or not
 * - signed-in: any signed-in person, whatever their roles
 * - a list of roles: a signed-in person holding at least one of them
 * - token:usage: a plant system's API token of that scope (never a session), checked first
 * Actions and endpoints check again with requireRole() for what they do.
 */
export type Access = 'public' | 'signed-in' | 'token:usage' | readonly Role[];

const readers: readonly Role[] = ['technician', 'planner', 'quality', 'inspector'];
const administrators: readonly Role[] = ['administrator'];
const auditors: readonly Role[] = ['quality', 'inspector'];
/** Access recertification (AC5): the administrators who grant access and those who review it. */
const accessReviewers: readonly Role[] = ['administrator', 'quality', 'inspector'];
const planners: readonly Role[] = ['planner'];
const technicians: readonly Role[] = ['technician'];

export const routeAccess = {
	'/': 'signed-in',
	'/login': 'public',
	'/logout': 'public',
	'/api': 'public',
	'/api/v1': 'public',
	'/api/v1/health': 'public',
	'/api/v1/health/live': 'public',
	/** The API description: any signed-in person (not anonymous: it maps every route and rule). */
	'/api/v1/openapi.json': 'signed-in',
	'/(app)/api-reference': 'signed-in',
	'/api/v1/audit': auditors,
	'/api/v1/audit/verify': auditors,
	'/api/v1/audit/verify/stream': auditors,
	'/api/v1/audit/checkpoints': auditors,
	'/api/v1/audit/proof': auditors,
	'/api/v1/audit/export': auditors,
	'/(app)/audit': auditors,
	'/(app)/history': readers,
	'/(app)/history/[kind=historykind]': readers,
	'/(app)/history/[kind=historykind]/[id]': readers,
	'/(app)/access-review': accessReviewers,
	'/(app)/access-review/[id=uuid]': accessReviewers,
	'/api/v1/access-review': accessReviewers,
	'/api/[...path]': 'public',
	'/(app)': 'signed-in',
	'/(app)/account': 'signed-in',
	'/(app)/plant': readers,
	'/(app)/plant/new': planners,
	'/(app)/plant/[id=uuid]': readers,
	'/(app)/plant/[id=uuid]/change': planners,
	'/(app)/instruments': readers,
	'/(app)/instruments/new': planners,
	'/(app)/instruments/[id=uuid]': readers,
	'/(app)/parts': readers,
	'/(app)/parts/new': planners,
	'/(app)/parts/[id=uuid]': readers,
	'/(app)/procedures': readers,
	'/(app)/procedures/new': planners,
	'/(app)/procedures/[id=uuid]': readers,
	'/(app)/procedures/[id=uuid]/compare': readers,
	'/(app)/procedures/versions': readers,
	'/(app)/procedures/versions/[id=uuid]': readers,
	'/(app)/procedures/versions/[id=uuid]/edit': planners,
	'/(app)/qualifications': readers,
	'/(app)/pm': readers,
	'/(app)/pm/new': planners,
	'/(app)/pm/[id=uuid]': readers,
	'/(app)/pm/reliability': readers,
	'/(app)/work': readers,
	'/(app)/work/new': planners,
	'/(app)/work/[id=uuid]': readers,
	'/(app)/work/[id=uuid]/steps': technicians,
	'/(app)/work/[id=uuid]/evidence': technicians,
	'/(app)/work/[id=uuid]/record.pdf': readers,
	'/(app)/work/[id=uuid]/released.pdf': readers,
	'/(app)/verify': 'signed-in',
	'/(app)/work/[id=uuid]/evidence/[evidence=uuid]': readers,
	'/(app)/work/[id=uuid]/steps/[key=stepkey]': technicians,
	'/(app)/deviations': readers,
	'/(app)/deviations/[id=uuid]': readers,
	'/api/v1/queues': 'signed-in',
	'/api/v1/equipment': 'public',
	'/api/v1/equipment/[tag]': 'public',
	'/api/v1/equipment/[tag]/usage': 'token:usage',
	'/(app)/people': administrators,
	'/(app)/people/new': administrators,
	'/(app)/people/tokens': administrators,
	'/(app)/people/[id=uuid]': administrators
} as const satisfies Record<RouteId, Access>;

export function mayAccess(access: Access, roles: readonly Role[] | undefined, signedIn: boolean) {
	if (access === 'public') return true;
	if (access === 'token:usage') return false; // a token, checked by the guard, never a person
	if (!signedIn) return false;
	if (access === 'signed-in') return true;
	return (roles ?? []).some((role) => access.includes(role));
}
