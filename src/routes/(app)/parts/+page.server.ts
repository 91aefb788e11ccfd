import * as parts from '$lib/server/parts';
import { currentSite } from '$lib/server/plant';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ parent, url }) => {
	const { user } = await parent();
	const site = (await currentSite())!;
	const q = (url.searchParams.get('q') ?? '').slice(0, 100);
	const sort = url.searchParams.get('sort') === 'material' ? 'material' : 'part';
	const list = await parts.listParts(site.id, q.isWellFormed() ? q : '');
	if (sort === 'material')
		list.sort(
			(a, b) =>
				a.materialCode.localeCompare(b.materialCode) || a.partNumber.localeCompare(b.partNumber)
		);
	return {
		q,
		sort,
		parts: list,
		mayRegister: user.roles.includes('planner')
	};
};
