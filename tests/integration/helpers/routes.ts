import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';

/**
 * The route tree as the integration tests see it (issue 2/10, 10/10): every form action and every
 * endpoint method found in src/routes, and a concrete path for each route id that serves requests.
 * Used by route-matrix.spec.ts (who may do what) and hostile-input.spec.ts (malformed input).
 */
const routesDir = new URL('../../../src/routes', import.meta.url).pathname;

const files = (dir: string): string[] =>
	readdirSync(dir).flatMap((f) =>
		statSync(join(dir, f)).isDirectory() ? files(join(dir, f)) : [join(dir, f)]
	);
const routeIdOf = (file: string) =>
	'/' + relative(routesDir, join(file, '..')).split(sep).join('/');

export type Write = { routeId: string; method: string; action: string | null };

/**
 * Every action of every +page.server.ts (the keys of `export const actions`) and every
 * POST/PUT/PATCH/DELETE of a +server.ts, found in the route tree: a new one is found too.
 */
export function writeRoutes(): Write[] {
	const writes: Write[] = [];
	for (const file of files(routesDir)) {
		const routeId = routeIdOf(file);
		const text = readFileSync(file, 'utf8');
		if (file.endsWith('+page.server.ts')) {
			const block = /export const actions[^=]*=\s*\{([\s\S]*?)\n\};/.exec(text)?.[1] ?? '';
			for (const [, name] of block.matchAll(/^\t(\w+)\s*[:(]/gm))
				writes.push({ routeId, method: 'POST', action: name! });
		} else if (file.endsWith('+server.ts')) {
			for (const [, method] of text.matchAll(/export const (POST|PUT|PATCH|DELETE)\b/g))
				writes.push({ routeId, method: method!, action: null });
		}
	}
	return writes;
}

/** Every method of every +server.ts (GET included), e.g. the API routes under /api. */
export function endpointRoutes(): { routeId: string; method: string }[] {
	const found: { routeId: string; method: string }[] = [];
	for (const file of files(routesDir)) {
		if (!file.endsWith('+server.ts')) continue;
		const text = readFileSync(file, 'utf8');
		for (const [, method] of text.matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g))
			found.push({ routeId: routeIdOf(file), method: method! });
	}
	return found;
}

/** The records a concrete path names: ids from the demo plant of the test's database. */
export type PathIds = {
	equipment: string;
	instrument: string;
	part: string;
	procedure: string;
	version: string;
	workOrder: string;
	account: string;
};

/** A concrete path for each route id that serves requests (layout-only ids have none). */
export const concretePaths = (ids: PathIds): Record<string, string> => ({
	'/(app)': '/',
	'/(app)/account': '/account',
	'/(app)/plant': '/plant',
	'/(app)/plant/new': '/plant/new',
	'/(app)/plant/[id=uuid]': `/plant/${ids.equipment}`,
	'/(app)/plant/[id=uuid]/change': `/plant/${ids.equipment}/change`,
	'/(app)/instruments': '/instruments',
	'/(app)/instruments/new': '/instruments/new',
	'/(app)/instruments/[id=uuid]': `/instruments/${ids.instrument}`,
	'/(app)/parts': '/parts',
	'/(app)/parts/new': '/parts/new',
	'/(app)/parts/[id=uuid]': `/parts/${ids.part}`,
	'/(app)/procedures': '/procedures',
	'/(app)/procedures/new': '/procedures/new',
	'/(app)/procedures/[id=uuid]': `/procedures/${ids.procedure}`,
	'/(app)/procedures/[id=uuid]/compare': `/procedures/${ids.procedure}/compare`,
	'/(app)/procedures/versions/[id=uuid]': `/procedures/versions/${ids.version}`,
	// An approved version: its editor answers 409 to a Planner (allowed, but nothing to edit).
	'/(app)/procedures/versions/[id=uuid]/edit': `/procedures/versions/${ids.version}/edit`,
	'/(app)/qualifications': '/qualifications',
	'/(app)/pm': '/pm',
	'/(app)/pm/new': '/pm/new',
	// No such schedule in this database: 404 to those allowed.
	'/(app)/pm/[id=uuid]': '/pm/00000000-0000-4000-8000-000000000000',
	'/(app)/pm/reliability': '/pm/reliability?unit=days',
	'/(app)/work': '/work',
	'/(app)/work/new': '/work/new',
	'/(app)/work/[id=uuid]': `/work/${ids.workOrder}`,
	'/(app)/work/[id=uuid]/steps/[key=stepkey]': `/work/${ids.workOrder}/steps/isolate`,
	// Upload is POST only (a GET is 405 to those allowed); an unknown photo is 404.
	'/(app)/work/[id=uuid]/evidence': `/work/${ids.workOrder}/evidence`,
	'/(app)/work/[id=uuid]/record.pdf': `/work/${ids.workOrder}/record.pdf`,
	// Not released: 404 to those allowed.
	'/(app)/work/[id=uuid]/released.pdf': `/work/${ids.workOrder}/released.pdf`,
	'/(app)/verify': `/verify?record=${'0'.repeat(64)}`,
	'/(app)/work/[id=uuid]/evidence/[evidence=uuid]': `/work/${ids.workOrder}/evidence/00000000-0000-4000-8000-000000000000`,
	// No such deviation of a SIP cycle: 404 to those allowed (9/10).
	'/(app)/deviations/[id=uuid]': '/deviations/00000000-0000-4000-8000-000000000000',
	'/api/v1/queues': '/api/v1/queues',
	// Token only (9/10): 401 JSON to every person, signed in or not.
	'/api/v1/equipment/[tag]/usage': '/api/v1/equipment/XV-3104/usage',
	'/(app)/people': '/people',
	'/(app)/people/new': '/people/new',
	'/(app)/people/tokens': '/people/tokens',
	'/(app)/people/[id=uuid]': `/people/${ids.account}`,
	'/login': '/login',
	'/logout': '/logout',
	'/api/v1/health': '/api/v1/health',
	'/api/v1/health/live': '/api/v1/health/live',
	'/api/v1/openapi.json': '/api/v1/openapi.json',
	'/(app)/api-reference': '/api-reference',
	'/api/v1/audit': '/api/v1/audit?limit=5',
	'/api/v1/audit/verify': '/api/v1/audit/verify',
	'/api/v1/audit/verify/stream': '/api/v1/audit/verify/stream',
	'/api/v1/audit/checkpoints': '/api/v1/audit/checkpoints',
	// No checkpoint of 1 event in this database: 404 JSON to those allowed.
	'/api/v1/audit/proof': '/api/v1/audit/proof?seq=1&treeSize=1',
	'/api/v1/audit/export': '/api/v1/audit/export',
	'/(app)/audit': '/audit',
	'/(app)/history/[kind=historykind]/[id]': `/history/work_order/${ids.workOrder}`,
	'/(app)/access-review': '/access-review',
	'/(app)/access-review/[id=uuid]': `/access-review/${ids.account}`,
	'/api/v1/access-review': '/api/v1/access-review',
	'/api/[...path]': '/api/v1/no-such-thing'
});

/** Route ids that only hold a layout: no path of their own. */
export const layoutsOnly = [
	'/',
	'/api',
	'/api/v1',
	'/(app)/procedures/versions',
	'/(app)/work/[id=uuid]/steps',
	'/(app)/history',
	'/(app)/history/[kind=historykind]',
	'/api/v1/equipment',
	'/api/v1/equipment/[tag]',
	'/(app)/deviations'
];
