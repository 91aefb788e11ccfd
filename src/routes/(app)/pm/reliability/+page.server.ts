import { requireRole } from '$lib/server/auth/guard';
import {
	DEFAULT_RELIABILITY,
	lifeUnitWords,
	readQuery,
	reliabilityChoices,
	reliabilityView
} from '$lib/server/reliability';
import type { PageServerLoad } from './$types';

/**
 * Diaphragm life (9/10 item 6): per equipment class and diaphragm material, the lives recorded,
 * their Weibull fit and the PM interval it suggests at the chosen reliability. Every reader may
 * open it. A query the page cannot read is answered on the page with what is wrong, beside the
 * chooser, and nothing else.
 */
export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'technician', 'planner', 'quality', 'inspector');
	const query = readQuery(event.url.searchParams);
	const asked = query.ok
		? query.value
		: { group: null, reliability: DEFAULT_RELIABILITY, unit: 'cycles' as const };
	const view = await reliabilityView(asked);
	return {
		today: view.today,
		groups: view.groups,
		problem: query.ok ? view.problem : query.message,
		group: query.ok ? view.group : null,
		chosen: {
			group: query.ok ? (view.group?.key ?? '') : '',
			reliability: asked.reliability,
			unit: asked.unit
		},
		reliabilityChoices: [...reliabilityChoices],
		unitWords: lifeUnitWords
	};
};
