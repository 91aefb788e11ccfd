import { currentSite, plantTree } from '$lib/server/plant';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ parent }) => {
	await parent();
	const site = (await currentSite())!;
	const buildings = await plantTree(site.id);
	return {
		plant: {
			buildings: buildings.length,
			areas: buildings.reduce((n, b) => n + b.areas.length, 0)
		},
		// Work orders, verifications and releases arrive with 5/10; nothing can wait yet.
		waiting: [] as { id: string; title: string }[]
	};
};
