import { siteToday } from '$lib/fitness';
import * as instruments from '$lib/server/instruments';
import { currentSite } from '$lib/server/plant';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ parent, url }) => {
	const { user } = await parent();
	const site = (await currentSite())!;
	const today = siteToday(site.timeZone);
	const q = (url.searchParams.get('q') ?? '').slice(0, 100).toLowerCase();
	const show = url.searchParams.get('show') === 'due' ? 'due' : 'all';
	const sort = url.searchParams.get('sort') === 'due' ? 'due' : 'code';
	const all = await instruments.listInstruments(site.id, today);
	if (sort === 'due')
		all.sort(
			(a, b) => (a.dueOn ?? '').localeCompare(b.dueOn ?? '') || a.code.localeCompare(b.code)
		);
	return {
		today,
		q,
		show,
		sort,
		instruments: all.filter(
			(i) =>
				(!q || `${i.code} ${i.kind} ${i.description}`.toLowerCase().includes(q)) &&
				(show === 'all' || i.dueSoon || !i.fitness.usable)
		),
		dueSoon: all.filter((i) => i.dueSoon).length,
		unusable: all.filter((i) => !i.fitness.usable).length,
		mayRegister: user.roles.includes('planner')
	};
};
