import * as parts from '$lib/server/parts';
import { currentSite } from '$lib/server/plant';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ parent, url }) => {
	const { user } = await parent();
	const site = (await currentSite())!;
	const q = (url.searchParams.get('q') ?? '').slice(0, 100);
	return {
		q,
		parts: await parts.listParts(site.id, q.isWellFormed() ? q : ''),
		mayRegister: user.roles.includes('planner')
	};
};
