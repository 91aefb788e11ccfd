import { z } from 'zod';
import { equipmentClasses, equipmentStatuses } from '$lib/equipment';
import * as equipment from '$lib/server/equipment';
import { currentSite, plantTree } from '$lib/server/plant';
import type { PageServerLoad } from './$types';

/** The filters live in the URL, so a view can be shared; anything unknown is ignored, never a 500. */
const filterSchema = z.object({
	q: z
		.string()
		.catch('')
		.transform((q) => q.slice(0, 100)),
	area: z.uuid().optional().catch(undefined),
	class: z.enum(equipmentClasses).optional().catch(undefined),
	status: z.enum(equipmentStatuses).optional().catch(undefined),
	sort: z.enum(['tag', 'area', 'class', 'status']).catch('tag')
});

export const load: PageServerLoad = async ({ parent, url }) => {
	const { user } = await parent();
	const site = (await currentSite())!;
	const filter = filterSchema.parse(Object.fromEntries(url.searchParams));
	const q = filter.q.isWellFormed() && !filter.q.includes('\u0000') ? filter.q : '';
	return {
		filter: { ...filter, q },
		equipment: await equipment.listEquipment(site.id, {
			q,
			areaId: filter.area,
			equipmentClass: filter.class,
			status: filter.status,
			sort: filter.sort
		}),
		areas: await equipment.areasOf(site.id),
		buildings: await plantTree(site.id),
		mayRegister: user.roles.includes('planner')
	};
};
