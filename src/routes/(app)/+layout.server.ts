import { error } from '@sveltejs/kit';
import { currentSite } from '$lib/server/plant';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const site = await currentSite();
	if (!site) error(503, 'No site is set up yet: run the seed (npm run db:seed) or add a site.');
	const user = locals.user!; // the guard lets no anonymous request through to (app)
	return {
		site: { code: site.code, name: site.name, timeZone: site.timeZone },
		user: { name: user.name, username: user.username, roles: user.roles },
		serverNow: new Date().toISOString()
	};
};
