import { error } from '@sveltejs/kit';
import { currentSite } from '$lib/server/plant';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async () => {
	const site = await currentSite();
	if (!site) error(503, 'No site is set up yet: run the seed (npm run db:seed) or add a site.');
	return {
		site: { code: site.code, name: site.name, timeZone: site.timeZone },
		serverNow: new Date().toISOString()
	};
};
