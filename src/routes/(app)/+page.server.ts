import { lockedAccounts } from '$lib/server/accounts';
import { currentSite, plantTree } from '$lib/server/plant';
import type { Role } from '$lib/roles';
import type { PageServerLoad } from './$types';

/** `at` is an ISO time shown in site time after the detail words. */
export type QueueItem = {
	id: string;
	title: string;
	detail: string;
	at?: string;
	href?: { route: '/(app)/people/[id=uuid]'; id: string };
};
export type Queue = { key: string; title: string; empty: string; items: QueueItem[] };

/** The queues each role works from; work orders, verifications and releases fill them from 5/10 on. */
async function queuesFor(roles: Role[]): Promise<Queue[]> {
	const queues: Queue[] = [];
	if (roles.includes('technician')) {
		queues.push(
			{
				key: 'perform',
				title: 'Steps to perform',
				empty: 'No work order is assigned to you.',
				items: []
			},
			{
				key: 'verify',
				title: 'Steps to verify',
				empty: 'No step is waiting for your verification.',
				items: []
			}
		);
	}
	if (roles.includes('planner')) {
		queues.push({
			key: 'plan',
			title: 'Work to plan',
			empty: 'No work order is waiting to be planned or assigned.',
			items: []
		});
	}
	if (roles.includes('quality')) {
		queues.push(
			{
				key: 'review',
				title: 'Records to review and release',
				empty: 'No executed work order is waiting for review.',
				items: []
			},
			{
				key: 'deviations',
				title: 'Deviations to disposition',
				empty: 'No open deviation.',
				items: []
			}
		);
	}
	if (roles.includes('administrator')) {
		const locked = await lockedAccounts();
		queues.push({
			key: 'locked',
			title: 'Locked accounts',
			empty: 'No account is locked.',
			items: locked.map((a) => ({
				id: a.id,
				title: `${a.fullName} (${a.username})`,
				detail: 'locked',
				at: a.lockedAt!.toISOString(),
				href: { route: '/(app)/people/[id=uuid]' as const, id: a.id }
			}))
		});
	}
	if (roles.includes('inspector')) {
		queues.push({
			key: 'read',
			title: 'Records to read',
			empty: 'Nothing waits for an inspector: every record is open to you to read.',
			items: []
		});
	}
	return queues;
}

export const load: PageServerLoad = async ({ locals }) => {
	const site = (await currentSite())!;
	const buildings = await plantTree(site.id);
	return {
		plant: {
			buildings: buildings.length,
			areas: buildings.reduce((n, b) => n + b.areas.length, 0)
		},
		queues: await queuesFor(locals.user!.roles)
	};
};
