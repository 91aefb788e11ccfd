import { error } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signSchema } from '$lib/schemas/signature';
import {
	cancelSchema,
	dispositionSchema,
	planChangeSchema,
	reviewSchema,
	seenSchema,
	signWithReasonSchema
} from '$lib/schemas/work';
import { siteToday } from '$lib/fitness';
import { followUpLinks } from '$lib/server/follow-ups';
import { recordAction } from '$lib/server/forms';
import { currentSite } from '$lib/server/plant';
import { isQualified } from '$lib/server/qualifications';
import { personOf } from '$lib/server/records';
import * as work from '$lib/server/work-orders';
import { stepDone } from '$lib/work';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await event.parent();
	const user = event.locals.user!;
	const found = await work.getWorkOrder(event.params.id);
	if (!found) error(404, 'No such work order.');
	const site = (await currentSite())!;
	const today = siteToday(site.timeZone);
	const seen = found.revision;
	const roles = user.roles;
	const assigned = found.plan.assignees.includes(user.id);
	const tookPart = work.tookPart(found, user.id);
	const qualified =
		roles.includes('technician') && (await isQualified(user.id, found.wo.procedureId, today));
	const sign = (id: string) =>
		superValidate({ password: '', seen }, zod4(signSchema), { id, errors: false });
	const firstOpen = found.steps.find((s) => !stepDone(s.step, s.status)) ?? null;
	return {
		wo: found.wo,
		related: await followUpLinks(found.wo),
		plan: found.plan,
		plans: found.plans,
		status: found.status,
		released: found.released,
		photos: found.photos,
		content: found.content,
		equipment: found.equipment,
		assignees: found.assignees,
		steps: found.steps,
		entries: found.entries,
		signoffs: found.signoffs,
		deviations: found.deviations,
		transitions: found.transitions,
		signatures: found.signatures,
		trail: found.trail.map((e) => ({ ...e, at: e.at.toISOString() })),
		trailReview: found.trailReview,
		technicians: roles.includes('planner') ? await work.assignableTechnicians() : [],
		blockers: work.releaseBlockers(found),
		revision: seen,
		firstOpen: firstOpen?.step.key ?? null,
		me: { assigned, qualified, tookPart },
		may: {
			start: found.status === 'planned' && roles.includes('technician'),
			cancel: found.status === 'planned' && roles.includes('planner'),
			plan:
				(found.status === 'planned' || found.status === 'in_progress') && roles.includes('planner'),
			execute: found.status === 'in_progress' && roles.includes('technician') && assigned,
			continue: found.status === 'in_progress' && roles.includes('technician'),
			quality: found.status === 'executed' && roles.includes('quality')
		},
		forms: {
			start: await superValidate({ seen }, zod4(seenSchema), { id: 'start', errors: false }),
			plan: await superValidate(
				{
					seen,
					dueOn: found.plan.dueOn,
					priority: found.plan.priority as 'routine' | 'high' | 'urgent',
					assignees: found.plan.assignees,
					notes: found.plan.notes,
					reason: ''
				},
				zod4(planChangeSchema),
				{ id: 'plan', errors: false }
			),
			cancel: await superValidate({ seen, reason: '' }, zod4(cancelSchema), {
				id: 'cancel',
				errors: false
			}),
			execute: await sign('execute'),
			review: await superValidate(
				{ password: '', seen, through: found.trail.at(-1)?.seq ?? 0 },
				zod4(reviewSchema),
				{ id: 'review', errors: false }
			),
			release: await sign('release'),
			return: await superValidate({ password: '', seen, reason: '' }, zod4(signWithReasonSchema), {
				id: 'return',
				errors: false
			}),
			dispositions: await Promise.all(
				found.deviations
					.filter((d) => !d.dispositionId)
					.map((d) =>
						superValidate(
							{ password: '', seen, deviationId: d.id, decision: 'accepted' as const, text: '' },
							zod4(dispositionSchema),
							{ id: `disposition-${d.id}`, errors: false }
						)
					)
			)
		}
	};
};

const ip = (event: Parameters<Actions[string]>[0]) => event.getClientAddress();

export const actions: Actions = {
	start: (event) =>
		recordAction(
			event,
			{
				schema: seenSchema,
				id: 'start',
				role: 'technician',
				ok: 'Started: the equipment is now Out of service. Work through the steps in order.'
			},
			(user, d) => work.startWorkOrder(user, event.params.id, d.seen, ip(event))
		),
	plan: (event) =>
		recordAction(
			event,
			{ schema: planChangeSchema, id: 'plan', role: 'planner', ok: 'The plan is changed.' },
			(user, { seen, reason, ...plan }) =>
				work.changePlan(personOf(user), event.params.id, plan, reason, seen, ip(event))
		),
	cancel: (event) =>
		recordAction(
			event,
			{ schema: cancelSchema, id: 'cancel', role: 'planner', ok: 'The work order is cancelled.' },
			(user, d) =>
				work.cancelWorkOrder(personOf(user), event.params.id, d.reason, d.seen, ip(event))
		),
	execute: (event) =>
		recordAction(
			event,
			{
				schema: signSchema,
				id: 'execute',
				role: 'technician',
				ok: 'Signed Executed. The equipment now awaits Quality’s release.'
			},
			(user, d) => work.completeExecution(user, event.params.id, d.password, d.seen, ip(event))
		),
	review: (event) =>
		recordAction(
			event,
			{
				schema: reviewSchema,
				id: 'review',
				role: 'quality',
				ok: 'The review of the audit trail is recorded with your signature.'
			},
			(user, d) => work.reviewTrail(user, event.params.id, d.password, d.seen, ip(event), d.through)
		),
	release: (event) =>
		recordAction(
			event,
			{
				schema: signSchema,
				id: 'release',
				role: 'quality',
				ok: 'Released. The equipment is back In service.'
			},
			(user, d) => work.releaseWorkOrder(user, event.params.id, d.password, d.seen, ip(event))
		),
	return: (event) =>
		recordAction(
			event,
			{
				schema: signWithReasonSchema,
				id: 'return',
				role: 'quality',
				ok: 'Returned for correction. The work order is In progress again.'
			},
			(user, d) =>
				work.returnWorkOrder(user, event.params.id, d.reason, d.password, d.seen, ip(event))
		),
	disposition: (event) => {
		// Each open deviation has its own form (id disposition-<deviation id>), named in the URL.
		const deviationId = event.url.searchParams.get('deviation') ?? '';
		return recordAction(
			event,
			{
				schema: dispositionSchema,
				id: `disposition-${deviationId}`,
				role: 'quality',
				ok: 'The deviation is dispositioned with your signature.'
			},
			(user, d) =>
				work.dispositionDeviation(
					user,
					event.params.id,
					d.deviationId,
					d.decision,
					d.text,
					d.password,
					d.seen,
					ip(event)
				)
		);
	}
};
