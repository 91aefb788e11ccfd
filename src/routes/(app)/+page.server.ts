import { currentSite, plantTree } from '$lib/server/plant';
import { queuesOf } from '$lib/server/queues';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	const site = (await currentSite())!;
	const buildings = await plantTree(site.id);
	return {
		plant: {
			buildings: buildings.length,
			areas: buildings.reduce((n, b) => n + b.areas.length, 0)
		},
		// The first view comes with the page; the browser then refreshes it from GET /api/v1/queues.
		queues: await queuesOf(locals.user!)
	};
};
