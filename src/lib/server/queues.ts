import type { Queue } from '$lib/queues';
import { lockedAccounts } from './accounts';
import type { User } from './auth/guard';
import { openSipDeviations } from './sip-deviations';
import { queuesFor } from './work-orders';

/** The queues of a person, by their roles: what waits for them, oldest first. */
export async function queuesOf(user: User): Promise<Queue[]> {
	const roles = user.roles;
	const work = roles.some((r) => r === 'technician' || r === 'planner' || r === 'quality')
		? await queuesFor(user)
		: {};
	const toWork = (key: string) =>
		(work[key] ?? []).map((e) => ({
			id: e.id,
			title: e.title,
			detail: e.detail,
			at: e.at,
			href: e.stepKey
				? {
						route: '/(app)/work/[id=uuid]/steps/[key=stepkey]' as const,
						id: e.workOrderId,
						key: e.stepKey
					}
				: { route: '/(app)/work/[id=uuid]' as const, id: e.workOrderId }
		}));
	const queues: Queue[] = [];
	if (roles.includes('technician'))
		queues.push(
			{
				key: 'perform',
				title: 'Work assigned to me',
				empty: 'No work order is assigned to you.',
				items: toWork('perform')
			},
			{
				key: 'verify',
				title: 'Steps to verify',
				empty: 'No step is waiting for your verification.',
				items: toWork('verify')
			}
		);
	if (roles.includes('planner'))
		queues.push({
			key: 'plan',
			title: 'Work to plan',
			empty: 'No work order is waiting to be assigned, and none is overdue.',
			items: toWork('plan')
		});
	if (roles.includes('quality'))
		queues.push(
			{
				key: 'review',
				title: 'Records to review and release',
				empty: 'No executed work order is waiting for review.',
				items: toWork('review')
			},
			{
				key: 'deviations',
				title: 'Deviations to disposition',
				empty: 'No open deviation.',
				items: [
					...toWork('deviations'),
					// SIP cycles that were not saturated steam (9/10), reported by the plant.
					...(await openSipDeviations()).map((d) => ({
						id: d.id,
						title: `${d.number} · ${d.tag}: SIP cycle not saturated steam`,
						detail: `cycle started ${d.cycle.startedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC`,
						at: d.raisedAt.toISOString(),
						href: { route: '/(app)/deviations/[id=uuid]' as const, id: d.id }
					}))
				].sort((a, b) => (a.at ?? '').localeCompare(b.at ?? ''))
			}
		);
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
	if (roles.includes('inspector'))
		queues.push({
			key: 'read',
			title: 'Records to read',
			empty: 'Nothing waits for an inspector: every record is open to you to read.',
			items: []
		});
	return queues;
}
