import { currentSite } from '$lib/server/plant';
import * as procedures from '$lib/server/procedures';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ parent, url }) => {
	const { user } = await parent();
	const site = (await currentSite())!;
	const q = (url.searchParams.get('q') ?? '').slice(0, 100);
	const all = await procedures.listProcedures(site.id);
	const needle = q.toLowerCase();
	return {
		q,
		procedures: needle
			? all.filter((p) => `${p.code} ${p.title}`.toLowerCase().includes(needle))
			: all,
		mayWrite: user.roles.includes('planner')
	};
};
