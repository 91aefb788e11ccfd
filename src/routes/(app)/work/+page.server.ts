import { z } from 'zod';
import { currentSite } from '$lib/server/plant';
import * as work from '$lib/server/work-orders';
import { workKinds, workStatuses } from '$lib/work';
import type { PageServerLoad } from './$types';

/** The filters live in the URL, so a view can be shared; anything unknown is ignored, never a 500. */
const filterSchema = z.object({
	status: z.enum(workStatuses).optional().catch(undefined),
	kind: z.enum(workKinds).optional().catch(undefined),
	equipment: z
		.string()
		.catch('')
		.transform((q) => (q.isWellFormed() && !q.includes('\u0000') ? q.slice(0, 20) : '')),
	assignee: z.uuid().optional().catch(undefined),
	due: z.enum(['overdue', 'week']).optional().catch(undefined),
	sort: z.enum(['due', 'number', 'equipment', 'status']).catch('due')
});

export const load: PageServerLoad = async ({ parent, url }) => {
	const { user } = await parent();
	const site = (await currentSite())!;
	const filter = filterSchema.parse(Object.fromEntries(url.searchParams));
	return {
		filter,
		workOrders: await work.listWorkOrders(site.id, filter),
		technicians: await work.assignableTechnicians(),
		mayCreate: user.roles.includes('planner')
	};
};
