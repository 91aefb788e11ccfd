import { currentSite, plantTree } from '$lib/server/plant';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ parent }) => {
	await parent();
	const site = (await currentSite())!;
	return { buildings: await plantTree(site.id) };
};
